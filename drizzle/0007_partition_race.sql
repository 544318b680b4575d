-- Two imports that need the same new monthly partition at once: the second one waited on the
-- advisory lock, then still saw no table through the catalog cache and failed with "relation
-- already exists". After the lock the check now reads pg_class with a fresh snapshot, and a table
-- created by someone else in between is taken as done.
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
			IF NOT EXISTS (SELECT 1 FROM pg_class c WHERE c.relname = part AND c.relnamespace = current_schema()::regnamespace) THEN
				BEGIN
					IF EXISTS (SELECT 1 FROM readings_default WHERE ts >= lo AND ts < hi) THEN
						EXECUTE format('CREATE TABLE %I (LIKE readings INCLUDING DEFAULTS INCLUDING CONSTRAINTS)', part);
						EXECUTE format('INSERT INTO %I SELECT * FROM readings_default WHERE ts >= %L AND ts < %L', part, lo, hi);
						EXECUTE format('DELETE FROM readings_default WHERE ts >= %L AND ts < %L', lo, hi);
						EXECUTE format('ALTER TABLE readings ATTACH PARTITION %I FOR VALUES FROM (%L) TO (%L)', part, lo, hi);
					ELSE
						EXECUTE format('CREATE TABLE %I PARTITION OF readings FOR VALUES FROM (%L) TO (%L)', part, lo, hi);
					END IF;
				EXCEPTION WHEN duplicate_table THEN
					NULL; -- created by a concurrent transaction after all
				END;
			END IF;
		END IF;
		m := (m + interval '1 month')::date;
	END LOOP;
END $$;
