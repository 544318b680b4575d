import { integer, pgTable, real, smallint, timestamp } from "drizzle-orm/pg-core";
import { METRICS, type Metric } from "~/domain/import/metrics";

/**
 * The readings table, for queries only: it is partitioned by month, which drizzle-kit cannot
 * express, so it is created by a hand-written migration (drizzle/0001_readings.sql) and kept out
 * of the schema drizzle-kit diffs. Values are in canonical units (A, V, W, W/m², °C, m/s).
 */
export const readings = pgTable("readings", {
  deviceId: integer("device_id").notNull(),
  metric: smallint("metric").notNull(),
  ts: timestamp("ts", { withTimezone: true }).notNull(),
  value: real("value").notNull(),
});

/** Metric codes stored in readings.metric: position in METRICS, from 1. Never reorder METRICS. */
export function metricCode(m: Metric): number {
  return METRICS.indexOf(m) + 1;
}

export function metricOfCode(code: number): Metric {
  const m = METRICS[code - 1];
  if (!m) throw new Error(`Unknown metric code ${code}`);
  return m;
}
