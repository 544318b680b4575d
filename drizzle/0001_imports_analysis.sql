CREATE TABLE "imports" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"org_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"kind" text NOT NULL,
	"status" text NOT NULL,
	"file_name" text NOT NULL,
	"object_key" text NOT NULL,
	"size_bytes" bigint,
	"format" text,
	"mapping" jsonb,
	"template_name" text,
	"timezone" text,
	"interval_seconds" integer,
	"progress_bytes" bigint DEFAULT 0 NOT NULL,
	"rows_accepted" bigint DEFAULT 0 NOT NULL,
	"rows_rejected" bigint DEFAULT 0 NOT NULL,
	"readings_loaded" bigint DEFAULT 0 NOT NULL,
	"summary" jsonb,
	"first_errors" jsonb,
	"reject_report_key" text,
	"error" text,
	"job_id" text,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "mapping_templates" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"name" text NOT NULL,
	"mapping" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "analysis_runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"status" text NOT NULL,
	"from_day" date,
	"to_day" date,
	"trigger" text NOT NULL,
	"stats" jsonb,
	"error" text,
	"job_id" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "combiner_days" (
	"site_id" uuid NOT NULL,
	"combiner_id" integer NOT NULL,
	"day" date NOT NULL,
	"valid_intervals" integer NOT NULL,
	"total_intervals" integer NOT NULL,
	"output_index" double precision,
	"peer_median_oi" double precision,
	"z" double precision,
	"robust_z" double precision,
	"strings_out" double precision,
	"lost_kwh" double precision,
	"loss_class" text,
	"excluded" jsonb,
	CONSTRAINT "combiner_days_combiner_id_day_pk" PRIMARY KEY("combiner_id","day")
);
--> statement-breakpoint
CREATE TABLE "flag_events" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "flag_events_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"flag_id" uuid NOT NULL,
	"from_state" text,
	"to_state" text NOT NULL,
	"reason" text,
	"user_id" uuid,
	"at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "flags" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"combiner_id" integer NOT NULL,
	"state" text DEFAULT 'new' NOT NULL,
	"first_day" date NOT NULL,
	"last_day" date NOT NULL,
	"strings_out" integer NOT NULL,
	"confidence" double precision NOT NULL,
	"lost_kwh_per_day" double precision NOT NULL,
	"lost_kwh_to_date" double precision NOT NULL,
	"open" boolean DEFAULT true NOT NULL,
	"state_reason" text,
	"explained_fraction" double precision,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "imports" ADD CONSTRAINT "imports_org_id_organisations_id_fk" FOREIGN KEY ("org_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "imports" ADD CONSTRAINT "imports_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "imports" ADD CONSTRAINT "imports_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "mapping_templates" ADD CONSTRAINT "mapping_templates_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "analysis_runs" ADD CONSTRAINT "analysis_runs_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "combiner_days" ADD CONSTRAINT "combiner_days_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "combiner_days" ADD CONSTRAINT "combiner_days_combiner_id_devices_id_fk" FOREIGN KEY ("combiner_id") REFERENCES "public"."devices"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flag_events" ADD CONSTRAINT "flag_events_flag_id_flags_id_fk" FOREIGN KEY ("flag_id") REFERENCES "public"."flags"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flag_events" ADD CONSTRAINT "flag_events_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_combiner_id_devices_id_fk" FOREIGN KEY ("combiner_id") REFERENCES "public"."devices"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "imports_site_created" ON "imports" USING btree ("site_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "mapping_templates_site_name" ON "mapping_templates" USING btree ("site_id","name");--> statement-breakpoint
CREATE INDEX "analysis_runs_site" ON "analysis_runs" USING btree ("site_id","created_at");--> statement-breakpoint
CREATE INDEX "combiner_days_site_day" ON "combiner_days" USING btree ("site_id","day");--> statement-breakpoint
CREATE INDEX "flag_events_flag" ON "flag_events" USING btree ("flag_id");--> statement-breakpoint
CREATE INDEX "flags_site_state" ON "flags" USING btree ("site_id","state");--> statement-breakpoint
CREATE INDEX "flags_combiner" ON "flags" USING btree ("combiner_id");