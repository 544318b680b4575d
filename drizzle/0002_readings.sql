-- Readings: one value per device, metric and interval start, in canonical units.
-- Partitioned by month so a month's data can be scanned, indexed and dropped on its own;
-- the primary key serves one device's time-range scans and makes re-imports replace, not double.
CREATE TABLE "readings" (
	"device_id" integer NOT NULL,
	"metric" smallint NOT NULL,
	"ts" timestamp with time zone NOT NULL,
	"value" real NOT NULL,
	CONSTRAINT "readings_pkey" PRIMARY KEY ("device_id", "metric", "ts")
) PARTITION BY RANGE ("ts");
--> statement-breakpoint
-- Catches anything outside the monthly partitions created so far.
CREATE TABLE "readings_default" PARTITION OF "readings" DEFAULT;
--> statement-breakpoint
-- Create the monthly partitions covering [from_ts, to_ts), idempotently. Rows already in the
-- default partition for that month would block the attach, so they are moved first.
CREATE OR REPLACE FUNCTION ensure_reading_partitions(from_ts timestamptz, to_ts timestamptz)
RETURNS void LANGUAGE plpgsql AS $$
DECLARE
	m date := date_trunc('month', from_ts AT TIME ZONE 'UTC')::date;
	last date := date_trunc('month', to_ts AT TIME ZONE 'UTC')::date;
	part text;
	lo timestamptz;
	hi timestamptz;
BEGIN
	WHILE m <= last LOOP
		part := format('readings_%s', to_char(m, 'YYYY_MM'));
		lo := (m::timestamp AT TIME ZONE 'UTC');
		hi := ((m + interval '1 month')::timestamp AT TIME ZONE 'UTC');
		IF to_regclass(part) IS NULL THEN
			PERFORM pg_advisory_xact_lock(hashtext(part));
			IF to_regclass(part) IS NULL THEN
				IF EXISTS (SELECT 1 FROM readings_default WHERE ts >= lo AND ts < hi) THEN
					EXECUTE format('CREATE TABLE %I (LIKE readings INCLUDING DEFAULTS INCLUDING CONSTRAINTS)', part);
					EXECUTE format('INSERT INTO %I SELECT * FROM readings_default WHERE ts >= %L AND ts < %L', part, lo, hi);
					EXECUTE format('DELETE FROM readings_default WHERE ts >= %L AND ts < %L', lo, hi);
					EXECUTE format('ALTER TABLE readings ATTACH PARTITION %I FOR VALUES FROM (%L) TO (%L)', part, lo, hi);
				ELSE
					EXECUTE format('CREATE TABLE %I PARTITION OF readings FOR VALUES FROM (%L) TO (%L)', part, lo, hi);
				END IF;
			END IF;
		END IF;
		m := (m + interval '1 month')::date;
	END LOOP;
END $$;
