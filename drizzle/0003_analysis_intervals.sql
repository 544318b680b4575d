CREATE TABLE "analysis_intervals" (
	"site_id" uuid NOT NULL,
	"ts" timestamp with time zone NOT NULL,
	"poa" double precision,
	"cell_temp" double precision,
	"sun_elevation" double precision NOT NULL,
	"reason" text,
	CONSTRAINT "analysis_intervals_site_id_ts_pk" PRIMARY KEY("site_id","ts")
);
--> statement-breakpoint
CREATE TABLE "peer_intervals" (
	"site_id" uuid NOT NULL,
	"group_key" integer NOT NULL,
	"ts" timestamp with time zone NOT NULL,
	"median_oi" double precision,
	"q25_oi" double precision,
	"q75_oi" double precision,
	"members" integer NOT NULL,
	CONSTRAINT "peer_intervals_site_id_group_key_ts_pk" PRIMARY KEY("site_id","group_key","ts")
);
--> statement-breakpoint
ALTER TABLE "analysis_intervals" ADD CONSTRAINT "analysis_intervals_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "peer_intervals" ADD CONSTRAINT "peer_intervals_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;