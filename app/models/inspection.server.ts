/**
 * Organisation-wide inspection setup: camera profiles with their lenses, the anomaly class rule
 * table (admin overrides of the defaults in app/domain/anomaly-classes.ts), the cross-reference
 * window and the cell size used for altitude advice.
 */
import { and, asc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import { db } from "~/db/client.server";
import { anomalyClassRules, cameraLenses, cameraProfiles, inspectionSettings } from "~/db/schema";
import { ANOMALY_CLASSES, effectiveRule, type AnomalyRule } from "~/domain/anomaly-classes";
import { audit } from "~/services/audit.server";

type Actor = { orgId: string; userId: string | null };

export async function listCameras(orgId: string) {
  const cams = await db().select().from(cameraProfiles).where(eq(cameraProfiles.orgId, orgId)).orderBy(asc(cameraProfiles.name));
  const lenses = cams.length
    ? await db().select().from(cameraLenses).where(inArray(cameraLenses.cameraId, cams.map((c) => c.id))).orderBy(asc(cameraLenses.focalLengthMm))
    : [];
  return cams.map((c) => ({ ...c, lenses: lenses.filter((l) => l.cameraId === c.id) }));
}

export const cameraSchema = z.object({
  name: z.string().trim().min(1, "Name the camera").max(80),
  widthPx: z.coerce.number({ error: "Width must be a number of pixels" }).int("Width is a whole number of pixels").min(32, "Width is at least 32 pixels").max(10000),
  heightPx: z.coerce.number({ error: "Height must be a number of pixels" }).int("Height is a whole number of pixels").min(32, "Height is at least 32 pixels").max(10000),
  pixelPitchUm: z.coerce.number({ error: "Pixel pitch must be a number" }).min(1, "Pixel pitch is between 1 and 100 µm").max(100, "Pixel pitch is between 1 and 100 µm"),
  focalLengthsMm: z
    .string()
    .trim()
    .min(1, "Give at least one lens focal length")
    .transform((s) => s.split(/[,;\s]+/).filter(Boolean).map(Number))
    .refine((a) => a.length > 0 && a.every((x) => Number.isFinite(x) && x >= 1 && x <= 500), "Focal lengths are numbers in mm between 1 and 500, separated by commas"),
});

export async function createCamera(actor: Actor, input: z.infer<typeof cameraSchema>) {
  return db().transaction(async (tx) => {
    const [cam] = await tx
      .insert(cameraProfiles)
      .values({ orgId: actor.orgId, name: input.name, widthPx: input.widthPx, heightPx: input.heightPx, pixelPitchUm: input.pixelPitchUm })
      .onConflictDoNothing()
      .returning();
    if (!cam) return null;
    for (const f of new Set(input.focalLengthsMm)) await tx.insert(cameraLenses).values({ cameraId: cam.id, focalLengthMm: f });
    await audit({ ...actor, action: "camera.create", entity: "camera_profile", entityId: cam.id, detail: { name: cam.name } });
    return cam;
  });
}

export async function deleteCamera(actor: Actor, cameraId: string): Promise<boolean> {
  const r = await db().delete(cameraProfiles).where(and(eq(cameraProfiles.id, cameraId), eq(cameraProfiles.orgId, actor.orgId))).returning({ id: cameraProfiles.id });
  return r.length > 0;
}

/** The organisation's overrides, keyed by class. */
export async function ruleOverrides(orgId: string): Promise<Map<string, AnomalyRule>> {
  const rows = await db().select().from(anomalyClassRules).where(eq(anomalyClassRules.orgId, orgId));
  return new Map(rows.map((r) => [r.classKey, { severity: r.severity, effectUnit: r.effectUnit, effectAmount: r.effectAmount }]));
}

/** Every class with the rule in force and whether it is the default. */
export async function ruleTable(orgId: string) {
  const o = await ruleOverrides(orgId);
  return ANOMALY_CLASSES.map((c) => ({ key: c.key, name: c.name, pattern: c.pattern, effectNote: c.effectNote, rule: effectiveRule(c.key, o), isDefault: !o.has(c.key) }));
}

export const ruleSchema = z.object({
  classKey: z.enum(ANOMALY_CLASSES.map((c) => c.key) as [string, ...string[]], { error: "Unknown class" }),
  severity: z.enum(["low", "medium", "high"], { error: "Choose a severity" }),
  effectUnit: z.enum(["string", "module", "none"], { error: "Choose what the effect is counted in" }),
  effectAmount: z.coerce.number({ error: "The effect must be a number" }).min(0, "The effect cannot be negative").max(30, "The effect is at most 30"),
});

export async function saveRule(actor: Actor, input: z.infer<typeof ruleSchema>) {
  const values = { severity: input.severity as AnomalyRule["severity"], effectUnit: input.effectUnit as AnomalyRule["effectUnit"], effectAmount: input.effectAmount };
  await db()
    .insert(anomalyClassRules)
    .values({ orgId: actor.orgId, classKey: input.classKey, ...values, updatedBy: actor.userId, updatedAt: new Date() })
    .onConflictDoUpdate({ target: [anomalyClassRules.orgId, anomalyClassRules.classKey], set: { ...values, updatedBy: actor.userId, updatedAt: new Date() } });
  await audit({ ...actor, action: "anomaly_rule.save", entity: "anomaly_class_rule", entityId: null, detail: { ...input } });
}

export async function resetRule(actor: Actor, classKey: string) {
  await db().delete(anomalyClassRules).where(and(eq(anomalyClassRules.orgId, actor.orgId), eq(anomalyClassRules.classKey, classKey)));
}

export async function getInspectionSettings(orgId: string): Promise<{ crossRefWindowDays: number; cellSizeM: number }> {
  const [r] = await db().select().from(inspectionSettings).where(eq(inspectionSettings.orgId, orgId)).limit(1);
  return { crossRefWindowDays: r?.crossRefWindowDays ?? 60, cellSizeM: r?.cellSizeM ?? 0.182 };
}

export const inspectionSettingsSchema = z.object({
  crossRefWindowDays: z.coerce.number({ error: "The window must be a number of days" }).int("Whole days").min(1, "At least 1 day").max(365, "At most 365 days"),
  cellSizeM: z.coerce.number({ error: "The cell size must be a number" }).min(0.05, "Cell edge between 0.05 and 0.3 m").max(0.3, "Cell edge between 0.05 and 0.3 m"),
});

export async function saveInspectionSettings(actor: Actor, input: z.infer<typeof inspectionSettingsSchema>) {
  await db()
    .insert(inspectionSettings)
    .values({ orgId: actor.orgId, ...input, updatedAt: new Date() })
    .onConflictDoUpdate({ target: inspectionSettings.orgId, set: { ...input, updatedAt: new Date() } });
  await audit({ ...actor, action: "inspection_settings.save", entity: "organisation", entityId: actor.orgId, detail: { ...input } });
}
