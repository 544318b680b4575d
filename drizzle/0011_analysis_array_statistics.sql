-- The analysis rewrites every chart row and combiner-day it analyses, so autovacuum analyses these
-- tables after most runs. Statistics of their array columns (and of the exclusion counts) cost
-- most of that work (element statistics over every array of the sample: ~2.8 s of CPU per
-- 1,000-combiner × 30-day run, next to the run itself) and no query uses them: these columns are
-- only ever read whole, by the keys. Statistics target 0 leaves them out of ANALYZE.
ALTER TABLE "combiner_currents" ALTER COLUMN "ts" SET STATISTICS 0, ALTER COLUMN "current" SET STATISTICS 0;
--> statement-breakpoint
ALTER TABLE "peer_days" ALTER COLUMN "ts" SET STATISTICS 0, ALTER COLUMN "median_oi" SET STATISTICS 0, ALTER COLUMN "q25_oi" SET STATISTICS 0, ALTER COLUMN "q75_oi" SET STATISTICS 0, ALTER COLUMN "members" SET STATISTICS 0;
--> statement-breakpoint
ALTER TABLE "combiner_days" ALTER COLUMN "excluded" SET STATISTICS 0;
