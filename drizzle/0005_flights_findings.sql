CREATE TABLE "anomaly_class_rules" (
	"org_id" uuid NOT NULL,
	"class_key" text NOT NULL,
	"severity" text NOT NULL,
	"effect_unit" text NOT NULL,
	"effect_amount" double precision NOT NULL,
	"updated_by" uuid,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "anomaly_class_rules_org_id_class_key_pk" PRIMARY KEY("org_id","class_key")
);
--> statement-breakpoint
CREATE TABLE "camera_lenses" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "camera_lenses_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"camera_id" uuid NOT NULL,
	"focal_length_mm" double precision NOT NULL
);
--> statement-breakpoint
CREATE TABLE "camera_profiles" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"org_id" uuid NOT NULL,
	"name" text NOT NULL,
	"width_px" integer NOT NULL,
	"height_px" integer NOT NULL,
	"pixel_pitch_um" double precision NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "finding_images" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "finding_images_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"finding_id" uuid NOT NULL,
	"kind" text DEFAULT 'ir' NOT NULL,
	"file_name" text NOT NULL,
	"object_key" text,
	"thumb_key" text,
	"content_type" text,
	"size_bytes" integer,
	"mark_x" double precision,
	"mark_y" double precision,
	"uploaded_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "findings" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"flight_id" uuid NOT NULL,
	"site_id" uuid NOT NULL,
	"string_id" integer NOT NULL,
	"combiner_id" integer NOT NULL,
	"string_number" integer NOT NULL,
	"class_key" text NOT NULL,
	"delta_t_k" double precision,
	"notes" text,
	"source" text NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "flights" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"site_id" uuid NOT NULL,
	"started_at" timestamp with time zone NOT NULL,
	"ended_at" timestamp with time zone,
	"block_ids" integer[] NOT NULL,
	"pilot_user_id" uuid,
	"pilot_name" text NOT NULL,
	"aircraft" text NOT NULL,
	"camera_id" uuid,
	"lens_id" integer,
	"camera_text" text,
	"altitude_m" double precision,
	"poa_wm2" double precision,
	"wind_kmh" double precision,
	"cloud_okta" integer,
	"ambient_c" double precision,
	"data_archived" boolean DEFAULT false NOT NULL,
	"archive_location" text,
	"notes" text,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "inspection_settings" (
	"org_id" uuid PRIMARY KEY NOT NULL,
	"cross_ref_window_days" integer DEFAULT 60 NOT NULL,
	"cell_size_m" double precision DEFAULT 0.182 NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "anomaly_class_rules" ADD CONSTRAINT "anomaly_class_rules_org_id_organisations_id_fk" FOREIGN KEY ("org_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "anomaly_class_rules" ADD CONSTRAINT "anomaly_class_rules_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "camera_lenses" ADD CONSTRAINT "camera_lenses_camera_id_camera_profiles_id_fk" FOREIGN KEY ("camera_id") REFERENCES "public"."camera_profiles"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "camera_profiles" ADD CONSTRAINT "camera_profiles_org_id_organisations_id_fk" FOREIGN KEY ("org_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "finding_images" ADD CONSTRAINT "finding_images_finding_id_findings_id_fk" FOREIGN KEY ("finding_id") REFERENCES "public"."findings"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "findings" ADD CONSTRAINT "findings_flight_id_flights_id_fk" FOREIGN KEY ("flight_id") REFERENCES "public"."flights"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "findings" ADD CONSTRAINT "findings_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "findings" ADD CONSTRAINT "findings_string_id_strings_id_fk" FOREIGN KEY ("string_id") REFERENCES "public"."strings"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "findings" ADD CONSTRAINT "findings_combiner_id_devices_id_fk" FOREIGN KEY ("combiner_id") REFERENCES "public"."devices"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "findings" ADD CONSTRAINT "findings_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flights" ADD CONSTRAINT "flights_site_id_sites_id_fk" FOREIGN KEY ("site_id") REFERENCES "public"."sites"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flights" ADD CONSTRAINT "flights_pilot_user_id_users_id_fk" FOREIGN KEY ("pilot_user_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flights" ADD CONSTRAINT "flights_camera_id_camera_profiles_id_fk" FOREIGN KEY ("camera_id") REFERENCES "public"."camera_profiles"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flights" ADD CONSTRAINT "flights_lens_id_camera_lenses_id_fk" FOREIGN KEY ("lens_id") REFERENCES "public"."camera_lenses"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flights" ADD CONSTRAINT "flights_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "inspection_settings" ADD CONSTRAINT "inspection_settings_org_id_organisations_id_fk" FOREIGN KEY ("org_id") REFERENCES "public"."organisations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "camera_lenses_camera_focal" ON "camera_lenses" USING btree ("camera_id","focal_length_mm");--> statement-breakpoint
CREATE UNIQUE INDEX "camera_profiles_org_name" ON "camera_profiles" USING btree ("org_id","name");--> statement-breakpoint
CREATE INDEX "finding_images_finding" ON "finding_images" USING btree ("finding_id");--> statement-breakpoint
CREATE INDEX "findings_site_combiner" ON "findings" USING btree ("site_id","combiner_id");--> statement-breakpoint
CREATE INDEX "findings_flight" ON "findings" USING btree ("flight_id");--> statement-breakpoint
CREATE INDEX "flights_site_started" ON "flights" USING btree ("site_id","started_at");