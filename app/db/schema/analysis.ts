import { boolean, date, doublePrecision, index, integer, jsonb, pgTable, primaryKey, real, text, timestamp, uuid } from "drizzle-orm/pg-core";
import { users } from "./auth";
import { devices, sites } from "./sites";

export const analysisRuns = pgTable(
  "analysis_runs",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    status: text("status", { enum: ["queued", "running", "done", "failed"] }).notNull(),
    fromDay: date("from_day"),
    toDay: date("to_day"),
    trigger: text("trigger", { enum: ["import", "manual", "api", "seed"] }).notNull(),
    /** Counts of excluded intervals per rule, and other figures of the run. */
    stats: jsonb("stats").$type<Record<string, unknown>>(),
    error: text("error"),
    jobId: text("job_id"),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
  },
  (t) => [index("analysis_runs_site").on(t.siteId, t.createdAt)],
);

/** One combiner on one local day: the figures every screen and flag stands on. */
export const combinerDays = pgTable(
  "combiner_days",
  {
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    combinerId: integer("combiner_id").notNull().references(() => devices.id, { onDelete: "cascade" }),
    day: date("day").notNull(),
    validIntervals: integer("valid_intervals").notNull(),
    totalIntervals: integer("total_intervals").notNull(),
    /** Median over valid intervals of measured ÷ expected current. */
    outputIndex: doublePrecision("output_index"),
    peerMedianOi: doublePrecision("peer_median_oi"),
    z: doublePrecision("z"),
    robustZ: doublePrecision("robust_z"),
    stringsOut: doublePrecision("strings_out"),
    lostKwh: doublePrecision("lost_kwh"),
    /** Why the day is not a string signal, when it is not: block_loss, data_quality, clipping… */
    lossClass: text("loss_class"),
    excluded: jsonb("excluded").$type<Record<string, number>>(),
  },
  (t) => [primaryKey({ columns: [t.combinerId, t.day] }), index("combiner_days_site_day").on(t.siteId, t.day)],
);

export const FLAG_STATES = ["new", "explained", "needs flight", "in field", "verifying", "recovered", "dismissed"] as const;
export type FlagState = (typeof FLAG_STATES)[number];

export const flags = pgTable(
  "flags",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    combinerId: integer("combiner_id").notNull().references(() => devices.id, { onDelete: "cascade" }),
    state: text("state", { enum: FLAG_STATES }).notNull().default("new"),
    firstDay: date("first_day").notNull(),
    lastDay: date("last_day").notNull(),
    stringsOut: integer("strings_out").notNull(),
    confidence: doublePrecision("confidence").notNull(),
    lostKwhPerDay: doublePrecision("lost_kwh_per_day").notNull(),
    lostKwhToDate: doublePrecision("lost_kwh_to_date").notNull(),
    /** Open: still seen in the latest analysis. */
    open: boolean("open").notNull().default(true),
    stateReason: text("state_reason"),
    explainedFraction: doublePrecision("explained_fraction"),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("flags_site_state").on(t.siteId, t.state), index("flags_combiner").on(t.combinerId)],
);

export const flagEvents = pgTable(
  "flag_events",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    flagId: uuid("flag_id").notNull().references(() => flags.id, { onDelete: "cascade" }),
    fromState: text("from_state"),
    toState: text("to_state").notNull(),
    reason: text("reason"),
    userId: uuid("user_id").references(() => users.id, { onDelete: "set null" }),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("flag_events_flag").on(t.flagId)],
);

export type CombinerDay = typeof combinerDays.$inferSelect;
export type Flag = typeof flags.$inferSelect;

/**
 * Site-level conditions of every analysed interval (one met row per timestamp): what the
 * combiner charts normalise by, so a 60-day series never recomputes the weather.
 */
export const analysisIntervals = pgTable(
  "analysis_intervals",
  {
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    ts: timestamp("ts", { withTimezone: true }).notNull(),
    poa: doublePrecision("poa"),
    cellTemp: doublePrecision("cell_temp"),
    sunElevation: doublePrecision("sun_elevation").notNull(),
    /** Site-wide rule that removed the interval (low_sun, low_poa, ramp, stale, out_of_range), or null. */
    reason: text("reason"),
  },
  (t) => [primaryKey({ columns: [t.siteId, t.ts] })],
);

/**
 * Peer-group statistics of the output index for every interval of one site-local day (median and
 * quartiles of the usable members, and how many there were), as parallel arrays in any order: one
 * row per group and day, so a run writes a few rows per group instead of one per interval, and the
 * combiner chart reads a 60-day band from ~60 rows. Written by every analysis run (delete of the
 * unit's rows, then insert), so no foreign key: the run's delete already covers the cascade.
 */
export const peerDays = pgTable(
  "peer_days",
  {
    siteId: uuid("site_id").notNull(),
    /** Peer group key: inverter id, block id or string count, by the site's peer grouping. */
    groupKey: integer("group_key").notNull(),
    day: date("day").notNull(),
    ts: timestamp("ts", { withTimezone: true }).array().notNull(),
    medianOi: doublePrecision("median_oi").array().notNull(),
    q25Oi: doublePrecision("q25_oi").array().notNull(),
    q75Oi: doublePrecision("q75_oi").array().notNull(),
    members: integer("members").array().notNull(),
  },
  (t) => [primaryKey({ columns: [t.siteId, t.groupKey, t.day] })],
);

/**
 * A combiner's current at the analysed daylight intervals of one site-local day whose site
 * conditions are trustworthy (sun above the run's minimum elevation, POA present and plausible:
 * the intervals the analysis scores or uses for energy), as parallel arrays in any order: the
 * combiner chart reads a 60-day window from ~60 rows instead of one readings page per interval.
 * Written by the analysis run with the day's results, so it follows every re-import.
 */
export const combinerCurrents = pgTable(
  "combiner_currents",
  {
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    combinerId: integer("combiner_id").notNull().references(() => devices.id, { onDelete: "cascade" }),
    day: date("day").notNull(),
    ts: timestamp("ts", { withTimezone: true }).array().notNull(),
    current: real("current").array().notNull(),
  },
  (t) => [primaryKey({ columns: [t.combinerId, t.day] }), index("combiner_currents_site_day").on(t.siteId, t.day)],
);
