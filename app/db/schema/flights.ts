import {
  boolean,
  doublePrecision,
  index,
  integer,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from "drizzle-orm/pg-core";
import { organisations, users } from "./auth";
import { devices, sites, strings } from "./sites";

/** Thermal cameras an organisation flies: sensor and pixel pitch; lenses below. */
export const cameraProfiles = pgTable(
  "camera_profiles",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    widthPx: integer("width_px").notNull(),
    heightPx: integer("height_px").notNull(),
    pixelPitchUm: doublePrecision("pixel_pitch_um").notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex("camera_profiles_org_name").on(t.orgId, t.name)],
);

export const cameraLenses = pgTable(
  "camera_lenses",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    cameraId: uuid("camera_id").notNull().references(() => cameraProfiles.id, { onDelete: "cascade" }),
    focalLengthMm: doublePrecision("focal_length_mm").notNull(),
  },
  (t) => [uniqueIndex("camera_lenses_camera_focal").on(t.cameraId, t.focalLengthMm)],
);

/** One infrared flight over a site, as the pilot logged it. */
export const flights = pgTable(
  "flights",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    startedAt: timestamp("started_at", { withTimezone: true }).notNull(),
    endedAt: timestamp("ended_at", { withTimezone: true }),
    /** Block ids flown over. */
    blockIds: integer("block_ids").array().notNull(),
    pilotUserId: uuid("pilot_user_id").references(() => users.id, { onDelete: "set null" }),
    pilotName: text("pilot_name").notNull(),
    aircraft: text("aircraft").notNull(),
    cameraId: uuid("camera_id").references(() => cameraProfiles.id, { onDelete: "set null" }),
    lensId: integer("lens_id").references(() => cameraLenses.id, { onDelete: "set null" }),
    /** Free text when the camera is not a saved profile (or as it was written on the day). */
    cameraText: text("camera_text"),
    altitudeM: doublePrecision("altitude_m"),
    poaWm2: doublePrecision("poa_wm2"),
    windKmh: doublePrecision("wind_kmh"),
    cloudOkta: integer("cloud_okta"),
    ambientC: doublePrecision("ambient_c"),
    dataArchived: boolean("data_archived").notNull().default(false),
    archiveLocation: text("archive_location"),
    notes: text("notes"),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("flights_site_started").on(t.siteId, t.startedAt)],
);

/** What the camera saw on one string during one flight. */
export const findings = pgTable(
  "findings",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    flightId: uuid("flight_id").notNull().references(() => flights.id, { onDelete: "cascade" }),
    siteId: uuid("site_id").notNull().references(() => sites.id, { onDelete: "cascade" }),
    stringId: integer("string_id").notNull().references(() => strings.id, { onDelete: "cascade" }),
    combinerId: integer("combiner_id").notNull().references(() => devices.id, { onDelete: "cascade" }),
    stringNumber: integer("string_number").notNull(),
    /** Key of app/domain/anomaly-classes.ts. */
    classKey: text("class_key").notNull(),
    deltaTK: doublePrecision("delta_t_k"),
    notes: text("notes"),
    source: text("source", { enum: ["csv", "manual", "api", "seed"] }).notNull(),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("findings_site_combiner").on(t.siteId, t.combinerId), index("findings_flight").on(t.flightId)],
);

/**
 * Infrared or visual pictures of a finding. A CSV names the file before it is uploaded:
 * `objectKey` stays null until the upload lands. `markX/markY` (0…1 of width/height) place
 * the marker the viewer draws.
 */
export const findingImages = pgTable(
  "finding_images",
  {
    id: integer("id").primaryKey().generatedAlwaysAsIdentity(),
    findingId: uuid("finding_id").notNull().references(() => findings.id, { onDelete: "cascade" }),
    kind: text("kind", { enum: ["ir", "visual"] }).notNull().default("ir"),
    fileName: text("file_name").notNull(),
    objectKey: text("object_key"),
    thumbKey: text("thumb_key"),
    contentType: text("content_type"),
    sizeBytes: integer("size_bytes"),
    markX: doublePrecision("mark_x"),
    markY: doublePrecision("mark_y"),
    uploadedAt: timestamp("uploaded_at", { withTimezone: true }),
  },
  (t) => [index("finding_images_finding").on(t.findingId)],
);

/** Admin overrides of the default severity and expected power effect of each anomaly class. */
export const anomalyClassRules = pgTable(
  "anomaly_class_rules",
  {
    orgId: uuid("org_id").notNull().references(() => organisations.id, { onDelete: "cascade" }),
    classKey: text("class_key").notNull(),
    severity: text("severity", { enum: ["low", "medium", "high"] }).notNull(),
    effectUnit: text("effect_unit", { enum: ["string", "module", "none"] }).notNull(),
    effectAmount: doublePrecision("effect_amount").notNull(),
    updatedBy: uuid("updated_by").references(() => users.id, { onDelete: "set null" }),
    updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.orgId, t.classKey] })],
);

/** Organisation-wide inspection settings beside the per-site thresholds. */
export const inspectionSettings = pgTable("inspection_settings", {
  orgId: uuid("org_id").primaryKey().references(() => organisations.id, { onDelete: "cascade" }),
  /** Findings this many days before a flag's first day or after its last day still count. */
  crossRefWindowDays: integer("cross_ref_window_days").notNull().default(60),
  /** Edge of one cell, metres (156–210 mm wafers). */
  cellSizeM: doublePrecision("cell_size_m").notNull().default(0.182),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
});

export type Flight = typeof flights.$inferSelect;
export type Finding = typeof findings.$inferSelect;
export type FindingImage = typeof findingImages.$inferSelect;
export type CameraProfile = typeof cameraProfiles.$inferSelect;
