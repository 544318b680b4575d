import {
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from "drizzle-orm/pg-core";
import { organisations, users } from "./auth";
import type { SiteSettings } from "~/domain/site-settings";

export const sites = pgTable(
  "sites",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    latitude: doublePrecision("latitude").notNull(),
    longitude: doublePrecision("longitude").notNull(),
    timezone: text("timezone").notNull(),
    /** The validated settings form, whole (mounting, module, thresholds…). */
    settings: jsonb("settings").$type<SiteSettings>().notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("sites_org").on(t.orgId)],
);

/** Owners see only the sites listed here; other roles see every site of their organisation. */
export const siteAccess = pgTable(
  "site_access",
  {
    userId: uuid("user_id").notNull().references(() => users.id, { onDelete: "cascade" }),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
  },
  (t) => [primaryKey({ columns: [t.userId, t.siteId] })],
);

export const blocks = pgTable(
  "blocks",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
  },
  (t) => [uniqueIndex("blocks_site_name").on(t.siteId, t.name)],
);

/**
 * Inverters, combiners and weather stations share one id space so that readings carry a
 * single integer device id.
 */
export const devices = pgTable(
  "devices",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    kind: text("kind", { enum: ["inverter", "combiner", "met"] }).notNull(),
    name: text("name").notNull(),
    blockId: integer("block_id").references(() => blocks.id, { onDelete: "cascade" }),
    /** For a combiner: its inverter. */
    parentId: integer("parent_id"),
    stringCount: integer("string_count"),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex("devices_site_name").on(t.siteId, t.name),
    index("devices_parent").on(t.parentId),
  ],
);

export const strings = pgTable(
  "strings",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    combinerId: integer("combiner_id").notNull().references(() => devices.id, { onDelete: "cascade" }),
    number: integer("number").notNull(),
    modules: integer("modules").notNull(),
    x: doublePrecision("x"),
    y: doublePrecision("y"),
  },
  (t) => [uniqueIndex("strings_combiner_number").on(t.combinerId, t.number)],
);

export type Site = typeof sites.$inferSelect;
export type Device = typeof devices.$inferSelect;
