import { bigint, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex, uuid } from "drizzle-orm/pg-core";
import { organisations, users } from "./auth";
import { sites } from "./sites";

/**
 * One upload of a layout or production export: the original file is kept in object storage as
 * the record of what arrived; the row follows it through mapping, queueing and loading.
 */
export const imports = pgTable(
  "imports",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    kind: text("kind", { enum: ["readings", "layout", "findings"] }).notNull(),
    status: text("status", { enum: ["uploading", "uploaded", "mapping", "queued", "running", "done", "failed"] }).notNull(),
    fileName: text("file_name").notNull(),
    objectKey: text("object_key").notNull(),
    sizeBytes: bigint("size_bytes", { mode: "number" }),
    format: text("format", { enum: ["long", "wide"] }),
    /** The column mapping used (JSON of app/domain/import/mapping.ts). */
    mapping: jsonb("mapping").$type<unknown>(),
    templateName: text("template_name"),
    timezone: text("timezone"),
    intervalSeconds: integer("interval_seconds"),
    progressBytes: bigint("progress_bytes", { mode: "number" }).notNull().default(0),
    rowsAccepted: bigint("rows_accepted", { mode: "number" }).notNull().default(0),
    rowsRejected: bigint("rows_rejected", { mode: "number" }).notNull().default(0),
    readingsLoaded: bigint("readings_loaded", { mode: "number" }).notNull().default(0),
    /** What arrived: devices, period, gaps, per-code reject counts. */
    summary: jsonb("summary").$type<Record<string, unknown>>(),
    /** The first rejects, for the screen and the API; the full report is in object storage. */
    firstErrors: jsonb("first_errors").$type<{ line: number; column?: string; value?: string; reason: string }[]>(),
    rejectReportKey: text("reject_report_key"),
    error: text("error"),
    jobId: text("job_id"),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
  },
  (t) => [index("imports_site_created").on(t.siteId, t.createdAt)],
);

export const mappingTemplates = pgTable(
  "mapping_templates",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    mapping: jsonb("mapping").$type<unknown>().notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("mapping_templates_site_name").on(t.siteId, t.name)],
);

export type Import = typeof imports.$inferSelect;
