CREATE TABLE "combiner_currents" (
	"site_id" uuid NOT NULL,
	"combiner_id" integer NOT NULL,
	"day" date NOT NULL,
	"ts" timestamp with time zone[] NOT NULL,
	"current" real[] NOT NULL,
	CONSTRAINT "combiner_currents_combiner_id_day_pk" PRIMARY KEY("combiner_id","day")
);
--> statement-breakpoint
ALTER TABLE "peer_intervals" DROP CONSTRAINT "peer_intervals_site_id_sites_id_fk";
--> statement-breakpoint
ALTER TABLE "combiner_currents" ADD CONSTRAINT "combiner_currents_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "combiner_currents" ADD CONSTRAINT "combiner_currents_combiner_id_devices_id_fk" FOREIGN KEY ("combiner_id") REFERENCES "public"."devices"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "combiner_currents_site_day" ON "combiner_currents" USING btree ("site_id","day");