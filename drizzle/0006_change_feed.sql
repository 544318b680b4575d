-- Change feed: committed writes to the tables behind the cached screens announce themselves with
-- NOTIFY (delivered at commit, never for a rolled-back transaction) and move a sequence. The web
-- process listens and drops its cached views; see app/services/change-feed.server.ts. Statement-level, so a bulk write
-- costs one notification, and the busy bulk tables (readings, analysis_intervals, peer_intervals,
-- imports) carry none: their results reach the screens through analysis_runs and combiner_days.
CREATE SEQUENCE sunsift_data_changes;
--> statement-breakpoint
CREATE SEQUENCE sunsift_auth_changes;
--> statement-breakpoint
-- The sequence moves at once (before commit) and every reader can see it; the NOTIFY follows at
-- commit. A cached view is served only while both still match the ones it was computed under.
CREATE OR REPLACE FUNCTION sunsift_announce_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  PERFORM nextval((TG_ARGV[0] || '_changes')::regclass);
  PERFORM pg_notify(TG_ARGV[0], TG_TABLE_NAME);
  RETURN NULL;
END
$$;
--> statement-breakpoint
CREATE TRIGGER sunsift_data_sites AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON sites FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_blocks AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON blocks FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_devices AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON devices FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_strings AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON strings FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_analysis_runs AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON analysis_runs FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_combiner_days AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON combiner_days FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_flags AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON flags FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_flag_events AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON flag_events FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_flights AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON flights FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_findings AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON findings FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_finding_images AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON finding_images FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_anomaly_class_rules AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON anomaly_class_rules FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_inspection_settings AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON inspection_settings FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_camera_profiles AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON camera_profiles FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_camera_lenses AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON camera_lenses FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_work_orders AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON work_orders FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_work_order_events AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON work_order_events FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_recoveries AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON recoveries FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_inspections AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON inspections FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_inspection_items AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON inspection_items FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_mapping_templates AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON mapping_templates FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_site_access AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON site_access FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_data_organisations AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON organisations FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_data');
--> statement-breakpoint
CREATE TRIGGER sunsift_auth_sessions AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON sessions FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_auth');
--> statement-breakpoint
CREATE TRIGGER sunsift_auth_users AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON users FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_auth');
--> statement-breakpoint
CREATE TRIGGER sunsift_auth_memberships AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON memberships FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_auth');
--> statement-breakpoint
CREATE TRIGGER sunsift_auth_site_access AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON site_access FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_auth');
--> statement-breakpoint
CREATE TRIGGER sunsift_auth_api_tokens AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON api_tokens FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_auth');
--> statement-breakpoint
CREATE TRIGGER sunsift_auth_organisations AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON organisations FOR EACH STATEMENT EXECUTE FUNCTION sunsift_announce_change('sunsift_auth');
