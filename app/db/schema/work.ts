import { sql } from "drizzle-orm";
import { boolean, date, doublePrecision, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex, uuid } from "drizzle-orm/pg-core";
import { organisations, users } from "./auth";
import { blocks, devices, sites } from "./sites";
import { flags } from "./analysis";

export const WORK_ORDER_STATES = ["open", "assigned", "in progress", "done", "cancelled"] as const;
export type WorkOrderState = (typeof WORK_ORDER_STATES)[number];

/** What the technician found, in the words of the close-out form. */
export const RESOLUTIONS = ["connector burnt", "fuse blown", "cable damaged", "module broken", "nothing found", "other"] as const;
export type Resolution = (typeof RESOLUTIONS)[number];

export const PRIORITIES = ["low", "normal", "high", "urgent"] as const;
export type Priority = (typeof PRIORITIES)[number];

/**
 * A job for the field: one combiner (and the strings on it) or a whole block, where it came
 * from (a flag, a drone finding, or a person), who goes, and what they found and did.
 */
export const workOrders = pgTable(
  "work_orders",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    /** Per-site running number, shown as WO-0001. */
    number: integer("number").notNull(),
    combinerId: integer("combiner_id").references(() => devices.id, { onDelete: "set null" }),
    blockId: integer("block_id").references(() => blocks.id, { onDelete: "set null" }),
    stringNumbers: integer("string_numbers").array().notNull().default(sql`'{}'::integer[]`),
    flagId: uuid("flag_id").references(() => flags.id, { onDelete: "set null" }),
    /** A drone finding (flights feature); a plain id so this table does not depend on that schema. */
    findingId: uuid("finding_id"),
    title: text("title").notNull(),
    whatToCheck: text("what_to_check").notNull(),
    assigneeId: uuid("assignee_id").references(() => users.id, { onDelete: "set null" }),
    dueOn: date("due_on"),
    priority: text("priority", { enum: PRIORITIES }).notNull().default("normal"),
    state: text("state", { enum: WORK_ORDER_STATES }).notNull().default("open"),
    resolution: text("resolution", { enum: RESOLUTIONS }),
    workDone: text("work_done"),
    /** Object-storage keys of the close-out photos. */
    photos: text("photos").array().notNull().default(sql`'{}'::text[]`),
    minutesSpent: integer("minutes_spent"),
    /** Local day the repair was made (the recovery compares the days around it). */
    repairedOn: date("repaired_on"),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
    closedAt: timestamp("closed_at", { withTimezone: true }),
    dueSoonNotifiedAt: timestamp("due_soon_notified_at", { withTimezone: true }),
    overdueNotifiedAt: timestamp("overdue_notified_at", { withTimezone: true }),
  },
  (t) => [
    uniqueIndex("work_orders_site_number").on(t.siteId, t.number),
    index("work_orders_site_state").on(t.siteId, t.state),
    index("work_orders_assignee").on(t.assigneeId, t.state),
    index("work_orders_flag").on(t.flagId),
  ],
);

export const workOrderEvents = pgTable(
  "work_order_events",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    workOrderId: uuid("work_order_id").notNull().references(() => workOrders.id, { onDelete: "cascade" }),
    fromState: text("from_state"),
    toState: text("to_state").notNull(),
    note: text("note"),
    userId: uuid("user_id").references(() => users.id, { onDelete: "set null" }),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("work_order_events_wo").on(t.workOrderId)],
);

export const RECOVERY_STATUSES = ["verifying", "recovered", "not recovered"] as const;
export type RecoveryStatus = (typeof RECOVERY_STATUSES)[number];

/** What one repair brought back, measured from combiner_days around the repair day. */
export const recoveries = pgTable(
  "recoveries",
  {
    workOrderId: uuid("work_order_id").primaryKey().references(() => workOrders.id, { onDelete: "cascade" }),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    combinerId: integer("combiner_id").notNull().references(() => devices.id, { onDelete: "cascade" }),
    flagId: uuid("flag_id").references(() => flags.id, { onDelete: "set null" }),
    repairedOn: date("repaired_on").notNull(),
    windowDays: integer("window_days").notNull(),
    /** Relative output index (OI ÷ peer median) over the clean days before / after. */
    beforeOi: doublePrecision("before_oi"),
    afterOi: doublePrecision("after_oi"),
    beforeDays: integer("before_days").notNull().default(0),
    afterDays: integer("after_days").notNull().default(0),
    recoveredStrings: integer("recovered_strings"),
    kwhPerDay: doublePrecision("kwh_per_day"),
    annualKwh: doublePrecision("annual_kwh"),
    annualValue: doublePrecision("annual_value"),
    status: text("status", { enum: RECOVERY_STATUSES }).notNull().default("verifying"),
    message: text("message").notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    checkedAt: timestamp("checked_at", { withTimezone: true }).notNull().defaultNow(),
    verifiedAt: timestamp("verified_at", { withTimezone: true }),
  },
  (t) => [index("recoveries_site").on(t.siteId, t.status)],
);

/** Which e-mails a person wants; a missing row means all of them. */
export const notificationPrefs = pgTable("notification_prefs", {
  userId: uuid("user_id").primaryKey().references(() => users.id, { onDelete: "cascade" }),
  assignment: boolean("assignment").notNull().default(true),
  due: boolean("due").notNull().default(true),
  digest: boolean("digest").notNull().default(true),
  imports: boolean("imports").notNull().default(true),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
});

export interface ChecklistItem {
  group: string;
  label: string;
}

export const inspectionTemplates = pgTable(
  "inspection_templates",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    kind: text("kind", { enum: ["monthly", "annual"] }).notNull(),
    everyMonths: integer("every_months").notNull(),
    items: jsonb("items").$type<ChecklistItem[]>().notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("inspection_templates_org_name").on(t.orgId, t.name)],
);

export const INSPECTION_STATES = ["scheduled", "in progress", "done", "cancelled"] as const;
export type InspectionState = (typeof INSPECTION_STATES)[number];

export const inspections = pgTable(
  "inspections",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    templateId: uuid("template_id").notNull().references(() => inspectionTemplates.id, { onDelete: "restrict" }),
    title: text("title").notNull(),
    dueOn: date("due_on").notNull(),
    assigneeId: uuid("assignee_id").references(() => users.id, { onDelete: "set null" }),
    state: text("state", { enum: INSPECTION_STATES }).notNull().default("scheduled"),
    notes: text("notes"),
    photos: text("photos").array().notNull().default(sql`'{}'::text[]`),
    doneOn: date("done_on"),
    doneBy: uuid("done_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("inspections_site_due").on(t.siteId, t.dueOn)],
);

export const INSPECTION_RESULTS = ["ok", "issue", "not checked"] as const;
export type InspectionResult = (typeof INSPECTION_RESULTS)[number];

export const inspectionItems = pgTable(
  "inspection_items",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    inspectionId: uuid("inspection_id").notNull().references(() => inspections.id, { onDelete: "cascade" }),
    position: integer("position").notNull(),
    group: text("group").notNull(),
    label: text("label").notNull(),
    result: text("result", { enum: INSPECTION_RESULTS }),
    note: text("note"),
  },
  (t) => [uniqueIndex("inspection_items_position").on(t.inspectionId, t.position)],
);

export type WorkOrder = typeof workOrders.$inferSelect;
export type Recovery = typeof recoveries.$inferSelect;
export type NotificationPrefs = typeof notificationPrefs.$inferSelect;
export type Inspection = typeof inspections.$inferSelect;
export type InspectionTemplate = typeof inspectionTemplates.$inferSelect;
