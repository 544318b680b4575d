-- The chart rows (one per combiner or peer group and day, a few kB of arrays) stay whole in their
-- row: no compression attempt (the numbers do not compress) and no out-of-line storage, which
-- would cost a write and a lookup per array. A row of 288 intervals is under 8 kB.
ALTER TABLE "peer_days" SET (toast_tuple_target = 8160);
--> statement-breakpoint
ALTER TABLE "combiner_currents" SET (toast_tuple_target = 8160);
