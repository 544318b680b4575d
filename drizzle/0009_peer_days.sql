CREATE TABLE "peer_days" (
	"site_id" uuid NOT NULL,
	"group_key" integer NOT NULL,
	"day" date NOT NULL,
	"ts" timestamp with time zone[] NOT NULL,
	"median_oi" double precision[] NOT NULL,
	"q25_oi" double precision[] NOT NULL,
	"q75_oi" double precision[] NOT NULL,
	"members" integer[] NOT NULL,
	CONSTRAINT "peer_days_site_id_group_key_day_pk" PRIMARY KEY("site_id","group_key","day")
);
--> statement-breakpoint
-- Existing peer statistics move over, one row per group and site-local day (no re-analysis needed).
INSERT INTO "peer_days" ("site_id", "group_key", "day", "ts", "median_oi", "q25_oi", "q75_oi", "members")
SELECT p."site_id", p."group_key", (p."ts" AT TIME ZONE s."timezone")::date,
       array_agg(p."ts" ORDER BY p."ts"), array_agg(p."median_oi" ORDER BY p."ts"), array_agg(p."q25_oi" ORDER BY p."ts"),
       array_agg(p."q75_oi" ORDER BY p."ts"), array_agg(p."members" ORDER BY p."ts")
  FROM "peer_intervals" p JOIN "sites" s ON s."id" = p."site_id"
 GROUP BY 1, 2, 3;
--> statement-breakpoint
DROP TABLE "peer_intervals" CASCADE;