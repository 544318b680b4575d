/**
 * Flights: the pilots' log of infrared flights over a site. Callers have checked the site
 * through requireSite / requireTokenSite; every query here is also scoped by the site.
 */
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { z } from "zod";
import { db } from "~/db/client.server";
import { blocks, cameraLenses, cameraProfiles, findings, flights, type Flight } from "~/db/schema";
import { zoneOffsetMs } from "~/domain/import/timestamps";
import { audit } from "~/services/audit.server";

type Actor = { orgId: string; userId: string | null };

export async function siteBlocks(siteId: string) {
  return db().select({ id: blocks.id, name: blocks.name }).from(blocks).where(eq(blocks.siteId, siteId)).orderBy(asc(blocks.name));
}

const optNum = (label: string, min: number, max: number) =>
  z.preprocess(
    (v) => (v === "" || v == null ? null : v),
    z.coerce.number({ error: `${label} must be a number` }).min(min, `${label} is between ${min} and ${max}`).max(max, `${label} is between ${min} and ${max}`).nullable(),
  );

/** Local date-time as typed in the form (`2026-10-21T13:30`), read in the site's zone. */
const localDateTime = z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2})?$/, "Give the date and time of take-off");

export const flightInputSchema = z
  .object({
    startedLocal: localDateTime,
    durationMin: optNum("Duration", 1, 600),
    blockIds: z.array(z.coerce.number().int()).min(1, "Tick the blocks the flight covered"),
    pilotName: z.string().trim().min(1, "Name the pilot").max(120),
    aircraft: z.string().trim().min(1, "Name the aircraft").max(200),
    cameraId: z.preprocess((v) => (v === "" ? undefined : v), z.uuid().optional()),
    lensId: z.preprocess((v) => (v === "" || v == null ? undefined : v), z.coerce.number().int().optional()),
    cameraText: z.string().trim().max(200).optional(),
    altitudeM: optNum("Altitude", 1, 500),
    poaWm2: optNum("POA", 0, 1600),
    windKmh: optNum("Wind", 0, 200),
    cloudOkta: z.preprocess((v) => (v === "" || v == null ? null : v), z.coerce.number().int("Cloud is a whole number of okta").min(0, "Cloud is 0 to 8 okta").max(8, "Cloud is 0 to 8 okta").nullable()),
    ambientC: optNum("Ambient temperature", -40, 60),
    dataArchived: z.preprocess((v) => v === "on" || v === "true" || v === true, z.boolean()),
    archiveLocation: z.string().trim().max(500).optional(),
    notes: z.string().trim().max(5000).optional(),
  })
  .refine((f) => !f.dataArchived || !!f.archiveLocation, { path: ["archiveLocation"], message: "Say where the raw data is archived" })
  .refine((f) => !!f.cameraId || !!f.cameraText, { path: ["cameraId"], message: "Choose a camera profile or describe the camera" });

export type FlightInput = z.infer<typeof flightInputSchema>;

/** UTC instant of a local wall time in `zone` (the first of two in a repeated hour). */
export function localToUtc(local: string, zone: string): Date {
  const asUtc = Date.parse(`${local.length === 16 ? `${local}:00` : local}Z`);
  let t = asUtc - zoneOffsetMs(zone, asUtc);
  t = asUtc - zoneOffsetMs(zone, t);
  return new Date(t);
}

export function utcToLocal(d: Date, zone: string): string {
  return new Date(d.getTime() + zoneOffsetMs(zone, d.getTime())).toISOString().slice(0, 16);
}

export async function createFlight(actor: Actor, site: { id: string; timezone: string }, input: FlightInput): Promise<{ ok: true; flight: Flight } | { ok: false; errors: Record<string, string> }> {
  const known = new Set((await siteBlocks(site.id)).map((b) => b.id));
  const unknown = input.blockIds.filter((b) => !known.has(b));
  if (unknown.length) return { ok: false, errors: { blockIds: "A chosen block is not on this site" } };
  if (input.cameraId) {
    const [cam] = await db().select().from(cameraProfiles).where(and(eq(cameraProfiles.id, input.cameraId), eq(cameraProfiles.orgId, actor.orgId))).limit(1);
    if (!cam) return { ok: false, errors: { cameraId: "No such camera profile" } };
    if (input.lensId != null) {
      const [lens] = await db().select().from(cameraLenses).where(and(eq(cameraLenses.id, input.lensId), eq(cameraLenses.cameraId, cam.id))).limit(1);
      if (!lens) return { ok: false, errors: { lensId: "That lens does not belong to the chosen camera" } };
    }
  }
  const startedAt = localToUtc(input.startedLocal, site.timezone);
  const [flight] = await db()
    .insert(flights)
    .values({
      siteId: site.id,
      startedAt,
      endedAt: input.durationMin != null ? new Date(startedAt.getTime() + input.durationMin * 60_000) : null,
      blockIds: [...new Set(input.blockIds)],
      pilotUserId: actor.userId,
      pilotName: input.pilotName,
      aircraft: input.aircraft,
      cameraId: input.cameraId ?? null,
      lensId: input.cameraId ? (input.lensId ?? null) : null,
      cameraText: input.cameraText || null,
      altitudeM: input.altitudeM,
      poaWm2: input.poaWm2,
      windKmh: input.windKmh,
      cloudOkta: input.cloudOkta,
      ambientC: input.ambientC,
      dataArchived: input.dataArchived,
      archiveLocation: input.archiveLocation || null,
      notes: input.notes || null,
      createdBy: actor.userId,
    })
    .returning();
  await audit({ ...actor, action: "flight.log", entity: "flight", entityId: flight!.id, detail: { siteId: site.id } });
  return { ok: true, flight: flight! };
}

export async function listFlights(siteId: string, page = 1, pageSize = 20) {
  const where = eq(flights.siteId, siteId);
  const [items, [count]] = await Promise.all([
    db()
      .select({
        id: flights.id,
        startedAt: flights.startedAt,
        endedAt: flights.endedAt,
        blockIds: flights.blockIds,
        pilotName: flights.pilotName,
        poaWm2: flights.poaWm2,
        windKmh: flights.windKmh,
        cloudOkta: flights.cloudOkta,
        dataArchived: flights.dataArchived,
        findings: sql<number>`(select count(*)::int from ${findings} f where f.flight_id = ${flights.id})`,
      })
      .from(flights)
      .where(where)
      .orderBy(desc(flights.startedAt))
      .limit(pageSize)
      .offset((Math.max(1, page) - 1) * pageSize),
    db().select({ n: sql<number>`count(*)::int` }).from(flights).where(where),
  ]);
  return { items, total: count?.n ?? 0, page: Math.max(1, page), pageSize };
}

export async function getFlight(siteId: string, flightId: string) {
  if (!/^[0-9a-f-]{36}$/i.test(flightId)) return null;
  const [f] = await db().select().from(flights).where(and(eq(flights.id, flightId), eq(flights.siteId, siteId))).limit(1);
  if (!f) return null;
  const [cam] = f.cameraId ? await db().select().from(cameraProfiles).where(eq(cameraProfiles.id, f.cameraId)).limit(1) : [];
  const [lens] = f.lensId ? await db().select().from(cameraLenses).where(eq(cameraLenses.id, f.lensId)).limit(1) : [];
  const blockRows = f.blockIds.length ? await db().select({ id: blocks.id, name: blocks.name }).from(blocks).where(inArray(blocks.id, f.blockIds)).orderBy(asc(blocks.name)) : [];
  return { flight: f, camera: cam ?? null, lens: lens ?? null, blocks: blockRows };
}

/** Local calendar day of a flight in the site's zone. */
export function flightDay(startedAt: Date, zone: string): string {
  return utcToLocal(startedAt, zone).slice(0, 10);
}
