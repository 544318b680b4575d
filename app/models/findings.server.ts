/**
 * Findings of infrared flights: CSV import (all or nothing), single findings by hand, their
 * images in object storage, and the cross-reference that ties them to flags.
 */
import { and, asc, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { devices, findingImages, findings, flagEvents, flags, flights, sites, strings } from "~/db/schema";
import { anomalyClass, effectInStrings, effectiveRule } from "~/domain/anomaly-classes";
import { clearSkyPoa } from "~/domain/clearsky";
import { crossReference, stringKwhPerDayEstimate, type XrefFinding, type XrefFlag } from "~/domain/cross-reference";
import { parseFindingsCsv, type LayoutString, type LineError } from "~/domain/findings-csv";
import { localMidnightUtc } from "~/domain/flight-timeline";
import type { SiteSettings } from "~/domain/site-settings";
import { audit } from "~/services/audit.server";
import { deleteObject, newObjectKey, objectSize, presignGet, presignPut, putObject, readHead } from "~/services/storage.server";
import { flightDay } from "./flights.server";
import { getInspectionSettings, ruleOverrides } from "./inspection.server";

type Actor = { orgId: string; userId: string | null };

export async function siteStrings(siteId: string): Promise<LayoutString[]> {
  const r = await db().execute<{ id: number; combiner_id: number; name: string; number: number; modules: number; x: number | null; y: number | null }>(sql`
    select s.id, s.combiner_id, d.name, s.number, s.modules, s.x, s.y from strings s join devices d on d.id = s.combiner_id
    where d.site_id = ${siteId} order by d.name, s.number`);
  return r.rows.map((s) => ({ id: s.id, combinerId: s.combiner_id, combinerName: s.name, number: s.number, modules: s.modules, x: s.x, y: s.y }));
}

export interface FindingsImportResult {
  ok: boolean;
  errors: LineError[];
  errorCount: number;
  imported: number;
  xref: CrossReferenceSummary | null;
}

/** Import a findings CSV for one flight. Any error refuses the whole file and changes nothing. */
export async function importFindingsCsv(actor: Actor, siteId: string, flightId: string, text: string, opts: { source?: "csv" | "api" | "seed"; toleranceM?: number } = {}): Promise<FindingsImportResult> {
  const [flight] = await db().select({ id: flights.id }).from(flights).where(and(eq(flights.id, flightId), eq(flights.siteId, siteId))).limit(1);
  if (!flight) return { ok: false, errors: [{ line: 0, reason: "No such flight on this site" }], errorCount: 1, imported: 0, xref: null };
  const parsed = parseFindingsCsv(text, await siteStrings(siteId), { toleranceM: opts.toleranceM });
  if (!parsed.ok) return { ok: false, errors: parsed.errors, errorCount: parsed.errorCount, imported: 0, xref: null };
  await db().transaction(async (tx) => {
    for (let i = 0; i < parsed.rows.length; i += 500) {
      const batch = parsed.rows.slice(i, i + 500);
      const ins = await tx
        .insert(findings)
        .values(batch.map((r) => ({ flightId, siteId, stringId: r.stringId, combinerId: r.combinerId, stringNumber: r.stringNumber, classKey: r.classKey, deltaTK: r.deltaTK, notes: r.notes, source: opts.source ?? "csv", createdBy: actor.userId })))
        .returning({ id: findings.id });
      const imgs = batch.map((r, k) => (r.image ? { findingId: ins[k]!.id, fileName: r.image, kind: (/^vis|visual|rgb/i.test(r.image) ? "visual" : "ir") as "ir" | "visual" } : null)).filter((x) => x !== null);
      if (imgs.length) await tx.insert(findingImages).values(imgs);
    }
  });
  await audit({ ...actor, action: "findings.import", entity: "flight", entityId: flightId, detail: { rows: parsed.rows.length } });
  const xref = await crossReferenceSite(siteId, { userId: actor.userId });
  return { ok: true, errors: [], errorCount: 0, imported: parsed.rows.length, xref };
}

/** One finding typed by hand: `<combiner>/<string>` or x,y like a CSV line. */
export async function addFinding(
  actor: Actor,
  siteId: string,
  flightId: string,
  input: { string?: string; x?: string; y?: string; className: string; deltaTK?: string; notes?: string },
): Promise<{ ok: true; xref: CrossReferenceSummary } | { ok: false; error: string }> {
  const esc = (s: string) => `"${s.replace(/"/g, '""')}"`;
  const csv = `string,x,y,class,delta_t_k,notes\n${[input.string ?? "", input.x ?? "", input.y ?? "", input.className, input.deltaTK ?? "", input.notes ?? ""].map(esc).join(",")}\n`;
  const r = await importFindingsCsv(actor, siteId, flightId, csv, { source: "csv" });
  if (!r.ok) return { ok: false, error: r.errors[0]?.reason ?? "The finding was not saved" };
  return { ok: true, xref: r.xref! };
}

export async function deleteFinding(actor: Actor, siteId: string, findingId: string): Promise<boolean> {
  const r = await db().delete(findings).where(and(eq(findings.id, findingId), eq(findings.siteId, siteId))).returning({ id: findings.id });
  if (r.length) {
    await audit({ ...actor, action: "finding.delete", entity: "finding", entityId: findingId });
    await crossReferenceSite(siteId, { userId: actor.userId });
  }
  return r.length > 0;
}

export interface FindingRow {
  id: string;
  flightId: string;
  combinerId: number;
  combiner: string;
  stringNumber: number;
  classKey: string;
  className: string;
  deltaTK: number | null;
  notes: string | null;
  flownAt: Date;
  images: { id: number; kind: string; fileName: string; uploaded: boolean; markX: number | null; markY: number | null }[];
}

async function findingRows(where: ReturnType<typeof and>): Promise<FindingRow[]> {
  const rows = await db()
    .select({ f: findings, combiner: devices.name, flownAt: flights.startedAt })
    .from(findings)
    .innerJoin(devices, eq(devices.id, findings.combinerId))
    .innerJoin(flights, eq(flights.id, findings.flightId))
    .where(where)
    .orderBy(desc(flights.startedAt), asc(devices.name), asc(findings.stringNumber));
  const imgs = rows.length ? await db().select().from(findingImages).where(inArray(findingImages.findingId, rows.map((r) => r.f.id))).orderBy(asc(findingImages.id)) : [];
  return rows.map(({ f, combiner, flownAt }) => ({
    id: f.id,
    flightId: f.flightId,
    combinerId: f.combinerId,
    combiner,
    stringNumber: f.stringNumber,
    classKey: f.classKey,
    className: anomalyClass(f.classKey)?.name ?? f.classKey,
    deltaTK: f.deltaTK,
    notes: f.notes,
    flownAt,
    images: imgs.filter((i) => i.findingId === f.id).map((i) => ({ id: i.id, kind: i.kind, fileName: i.fileName, uploaded: !!i.objectKey, markX: i.markX, markY: i.markY })),
  }));
}

export function flightFindings(siteId: string, flightId: string) {
  return findingRows(and(eq(findings.siteId, siteId), eq(findings.flightId, flightId)));
}

export function combinerFindings(siteId: string, combinerId: number) {
  return findingRows(and(eq(findings.siteId, siteId), eq(findings.combinerId, combinerId)));
}

// ---------------------------------------------------------------- images

const IMAGE_TYPES = new Set(["image/png", "image/jpeg", "image/webp", "image/tiff"]);
export const MAX_IMAGE_BYTES = 50 * 1024 * 1024;

/**
 * Presigned PUT URLs for the images of a flight. Files are matched by name to the images the
 * findings CSV named; `findingId` attaches a new picture to one finding instead.
 */
export async function presignImages(
  siteId: string,
  flightId: string,
  files: { name: string; size: number; type: string }[],
  opts: { findingId?: string; kind?: "ir" | "visual" } = {},
): Promise<{ uploads: { imageId: number; name: string; url: string; thumbUrl: string }[]; unmatched: string[]; refused: string[] }> {
  const uploads: { imageId: number; name: string; url: string; thumbUrl: string }[] = [];
  const unmatched: string[] = [];
  const refused: string[] = [];
  for (const file of files.slice(0, 500)) {
    if (!IMAGE_TYPES.has(file.type) || file.size <= 0 || file.size > MAX_IMAGE_BYTES) {
      refused.push(file.name);
      continue;
    }
    let imageId: number | null = null;
    if (opts.findingId) {
      const [f] = await db().select({ id: findings.id }).from(findings).where(and(eq(findings.id, opts.findingId), eq(findings.siteId, siteId), eq(findings.flightId, flightId))).limit(1);
      if (!f) return { uploads, unmatched: files.map((x) => x.name), refused };
      const [img] = await db().insert(findingImages).values({ findingId: f.id, fileName: file.name, kind: opts.kind ?? "ir" }).returning({ id: findingImages.id });
      imageId = img!.id;
    } else {
      const r = await db().execute<{ id: number }>(sql`
        select i.id from finding_images i join findings f on f.id = i.finding_id
        where f.site_id = ${siteId} and f.flight_id = ${flightId} and i.file_name = ${file.name} order by i.object_key is null desc, i.id limit 1`);
      imageId = r.rows[0]?.id ?? null;
    }
    if (imageId == null) {
      unmatched.push(file.name);
      continue;
    }
    const key = newObjectKey(`sites/${siteId}/flights/${flightId}`, file.name);
    const thumbKey = `${key}.thumb.png`;
    await db().update(findingImages).set({ objectKey: key, thumbKey, contentType: file.type, sizeBytes: file.size, uploadedAt: null }).where(eq(findingImages.id, imageId));
    uploads.push({ imageId, name: file.name, url: await presignPut(key), thumbUrl: await presignPut(thumbKey) });
  }
  return { uploads, unmatched, refused };
}

const IMAGE_NAMES: Record<string, string> = { "image/png": "PNG", "image/jpeg": "JPEG", "image/webp": "WebP", "image/tiff": "TIFF" };

/** The picture format of the first bytes (magic numbers from each format's specification), or null. */
export function imageTypeOf(b: Uint8Array): string | null {
  const at = (o: number, ...xs: number[]) => xs.every((x, i) => b[o + i] === x);
  if (at(0, 0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a)) return "image/png";
  if (at(0, 0xff, 0xd8, 0xff)) return "image/jpeg";
  if (at(0, 0x52, 0x49, 0x46, 0x46) && at(8, 0x57, 0x45, 0x42, 0x50)) return "image/webp";
  if (at(0, 0x49, 0x49, 0x2a, 0x00) || at(0, 0x4d, 0x4d, 0x00, 0x2a)) return "image/tiff";
  return null;
}

/**
 * After the browser's PUTs: keep the images whose object arrived and whose bytes are the picture
 * format they claimed (the type a browser sends comes from the file name); forget the rest.
 */
export async function confirmImages(siteId: string, flightId: string, imageIds: number[]): Promise<{ confirmed: number; missing: number; refused: string[] }> {
  let confirmed = 0;
  let missing = 0;
  const refused: string[] = [];
  for (const id of imageIds.slice(0, 500)) {
    const img = await imageOf(siteId, id);
    if (!img || img.flightId !== flightId || !img.objectKey) {
      missing++;
      continue;
    }
    const size = await objectSize(img.objectKey);
    if (size == null) {
      await db().update(findingImages).set({ objectKey: null, thumbKey: null }).where(eq(findingImages.id, id));
      missing++;
      continue;
    }
    const actual = imageTypeOf(await readHead(img.objectKey, 16));
    if (!actual || actual !== img.contentType) {
      const claimed = IMAGE_NAMES[img.contentType ?? ""] ?? "picture";
      refused.push(
        actual
          ? `${img.fileName} is a ${IMAGE_NAMES[actual]} picture, not ${claimed} as its name says; rename it and upload it again.`
          : `${img.fileName} is not a picture (its content is not PNG, JPEG, WebP or TIFF); it was not kept.`,
      );
      await Promise.all([deleteObject(img.objectKey), img.thumbKey ? deleteObject(img.thumbKey) : null]);
      await db().update(findingImages).set({ objectKey: null, thumbKey: null, contentType: null, sizeBytes: null, uploadedAt: null }).where(eq(findingImages.id, id));
      continue;
    }
    const thumb = img.thumbKey ? await objectSize(img.thumbKey) : null;
    await db().update(findingImages).set({ uploadedAt: new Date(), sizeBytes: size, thumbKey: thumb == null ? null : img.thumbKey }).where(eq(findingImages.id, id));
    confirmed++;
  }
  return { confirmed, missing, refused };
}

/** Store an image from the server side (demo seed, API): the same small picture serves as its thumbnail. */
export async function storeImage(siteId: string, flightId: string, fileName: string, bytes: Buffer, contentType = "image/png"): Promise<boolean> {
  const r = await db().execute<{ id: number }>(sql`
    select i.id from finding_images i join findings f on f.id = i.finding_id
    where f.site_id = ${siteId} and f.flight_id = ${flightId} and i.file_name = ${fileName} and i.object_key is null order by i.id limit 1`);
  const id = r.rows[0]?.id;
  if (id == null) return false;
  const key = newObjectKey(`sites/${siteId}/flights/${flightId}`, fileName);
  await putObject(key, bytes, bytes.length, contentType);
  await db().update(findingImages).set({ objectKey: key, thumbKey: key, contentType, sizeBytes: bytes.length, uploadedAt: new Date() }).where(eq(findingImages.id, id));
  return true;
}

export async function imageOf(siteId: string, imageId: number) {
  const [row] = await db()
    .select({ img: findingImages, flightId: findings.flightId })
    .from(findingImages)
    .innerJoin(findings, eq(findings.id, findingImages.findingId))
    .where(and(eq(findingImages.id, imageId), eq(findings.siteId, siteId)))
    .limit(1);
  return row ? { ...row.img, flightId: row.flightId } : null;
}

/** Short-lived URLs the browser may load the pictures (and thumbnails) from. */
export async function imageUrls(siteId: string, imageIds: number[]): Promise<Record<number, { full: string; thumb: string }>> {
  const out: Record<number, { full: string; thumb: string }> = {};
  for (const id of imageIds) {
    const img = await imageOf(siteId, id);
    if (!img?.objectKey || !img.uploadedAt) continue;
    const full = await presignGet(img.objectKey, img.fileName, 3600);
    out[id] = { full, thumb: img.thumbKey && img.thumbKey !== img.objectKey ? await presignGet(img.thumbKey, `thumb-${img.fileName}.png`, 3600) : full };
  }
  return out;
}

export async function setImageMark(siteId: string, imageId: number, x: number | null, y: number | null): Promise<boolean> {
  const img = await imageOf(siteId, imageId);
  if (!img) return false;
  const clamp = (v: number | null) => (v == null || !Number.isFinite(v) ? null : Math.min(1, Math.max(0, v)));
  await db().update(findingImages).set({ markX: clamp(x), markY: clamp(y) }).where(eq(findingImages.id, imageId));
  return true;
}

export async function pendingImageCount(siteId: string, flightId: string): Promise<number> {
  const [r] = await db()
    .select({ n: sql<number>`count(*)::int` })
    .from(findingImages)
    .innerJoin(findings, eq(findings.id, findingImages.findingId))
    .where(and(eq(findings.siteId, siteId), eq(findings.flightId, flightId), isNull(findingImages.uploadedAt)));
  return r?.n ?? 0;
}

// ---------------------------------------------------------------- cross-reference

export interface CrossReferenceSummary {
  flags: number;
  explained: number;
  needsFlight: number;
  changed: number;
  unflaggedFindings: number;
}

/** Clear-sky POA insolation of a local day, kWh/m² (15-minute steps), for the string energy estimate. */
function clearSkyInsolation(day: string, settings: SiteSettings, zone: string): number {
  const from = localMidnightUtc(day, zone);
  let wh = 0;
  for (let t = from + 7.5 * 60_000; t < from + 86_400_000; t += 15 * 60_000)
    wh += clearSkyPoa(new Date(t), { lat: settings.latitude, lon: settings.longitude, elevationM: settings.elevation, mounting: settings.mounting }).poa * 0.25;
  return wh / 1000;
}

/**
 * Match every open flag of the site with the findings on its combiner's strings and set each
 * flag's explained fraction, advice and — for flags in new / explained / needs flight —
 * its state, with a flag event on every change. Run after a findings import and after every
 * analysis run.
 */
export async function crossReferenceSite(siteId: string, opts: { userId?: string | null } = {}): Promise<CrossReferenceSummary> {
  const [site] = await db().select().from(sites).where(eq(sites.id, siteId)).limit(1);
  if (!site) throw new Error("No such site");
  const [settings, rules] = await Promise.all([getInspectionSettings(site.orgId), ruleOverrides(site.orgId)]);
  const openFlags = await db()
    .select({ f: flags, combinerName: devices.name })
    .from(flags)
    .innerJoin(devices, eq(devices.id, flags.combinerId))
    .where(and(eq(flags.siteId, siteId), eq(flags.open, true)));
  const fRows = await db()
    .select({ id: findings.id, combinerId: findings.combinerId, combinerName: devices.name, stringNumber: findings.stringNumber, classKey: findings.classKey, startedAt: flights.startedAt, modules: strings.modules })
    .from(findings)
    .innerJoin(flights, eq(flights.id, findings.flightId))
    .innerJoin(devices, eq(devices.id, findings.combinerId))
    .innerJoin(strings, eq(strings.id, findings.stringId))
    .where(eq(findings.siteId, siteId));
  const xFlags: XrefFlag[] = openFlags.map(({ f, combinerName }) => ({
    id: f.id,
    combinerId: f.combinerId,
    combinerName,
    state: f.state,
    stringsOut: f.stringsOut,
    lostKwhPerDay: f.lostKwhPerDay,
    firstDay: f.firstDay,
    lastDay: f.lastDay,
  }));
  const xFindings: XrefFinding[] = fRows.map((r) => ({
    id: r.id,
    combinerId: r.combinerId,
    combinerName: r.combinerName,
    stringNumber: r.stringNumber,
    classKey: r.classKey,
    flownOn: flightDay(r.startedAt, site.timezone),
    modulesPerString: r.modules,
  }));
  const modules = fRows[0]?.modules ?? 28;
  const today = new Date().toISOString().slice(0, 10);
  const stringKwh = stringKwhPerDayEstimate(modules, site.settings.module.pmp, clearSkyInsolation(xFindings[0]?.flownOn ?? today, site.settings, site.timezone));
  const result = crossReference(xFlags, xFindings, {
    threshold: site.settings.thresholds.explainedThreshold,
    windowDays: settings.crossRefWindowDays,
    rules,
    stringKwhPerDay: stringKwh,
  });
  let changed = 0;
  let explained = 0;
  let needsFlight = 0;
  await db().transaction(async (tx) => {
    for (const r of result.flags) {
      const cur = openFlags.find((x) => x.f.id === r.flagId)!.f;
      const fraction = Math.round(r.explainedFraction * 1000) / 1000;
      const pct = Math.round(r.explainedFraction * 100);
      const reason =
        r.matched.length === 0
          ? `no finding on ${openFlags.find((x) => x.f.id === r.flagId)!.combinerName} within ${settings.crossRefWindowDays} days: needs a flight`
          : `${r.matched.length} finding${r.matched.length === 1 ? " explains" : "s explain"} ${pct} % of the deficit. ${r.advice}`;
      const next = r.nextState ?? cur.state;
      if (next !== cur.state) {
        changed++;
        await tx.insert(flagEvents).values({ flagId: cur.id, fromState: cur.state, toState: next, reason: `cross-reference: ${reason}`, userId: opts.userId ?? null });
      }
      if (next === "explained") explained++;
      if (next === "needs flight") needsFlight++;
      await tx
        .update(flags)
        .set({ explainedFraction: fraction, state: next, ...(r.nextState ? { stateReason: reason } : {}), updatedAt: new Date() })
        .where(eq(flags.id, cur.id));
    }
  });
  return { flags: result.flags.length, explained, needsFlight, changed, unflaggedFindings: result.unflagged.length };
}

/** The cross-reference of a site, for screens: per open flag its matched findings and advice; findings without a flag. */
export async function crossReferenceView(siteId: string) {
  const [site] = await db().select().from(sites).where(eq(sites.id, siteId)).limit(1);
  if (!site) throw new Error("No such site");
  const [settings, rules] = await Promise.all([getInspectionSettings(site.orgId), ruleOverrides(site.orgId)]);
  const openFlags = await db()
    .select({ f: flags, combinerName: devices.name, stringCount: devices.stringCount })
    .from(flags)
    .innerJoin(devices, eq(devices.id, flags.combinerId))
    .where(and(eq(flags.siteId, siteId), eq(flags.open, true)));
  const all = await findingRows(eq(findings.siteId, siteId));
  const mods = await db().execute<{ id: string; modules: number }>(sql`select f.id, s.modules from findings f join strings s on s.id = f.string_id where f.site_id = ${siteId}`);
  const modBy = new Map(mods.rows.map((m) => [m.id, m.modules]));
  const xFindings: XrefFinding[] = all.map((r) => ({
    id: r.id,
    combinerId: r.combinerId,
    combinerName: r.combiner,
    stringNumber: r.stringNumber,
    classKey: r.classKey,
    flownOn: flightDay(r.flownAt, site.timezone),
    modulesPerString: modBy.get(r.id) ?? 28,
  }));
  const stringKwh = stringKwhPerDayEstimate(xFindings[0]?.modulesPerString ?? 28, site.settings.module.pmp, clearSkyInsolation(xFindings[0]?.flownOn ?? new Date().toISOString().slice(0, 10), site.settings, site.timezone));
  const res = crossReference(
    openFlags.map(({ f, combinerName }) => ({ id: f.id, combinerId: f.combinerId, combinerName, state: f.state, stringsOut: f.stringsOut, lostKwhPerDay: f.lostKwhPerDay, firstDay: f.firstDay, lastDay: f.lastDay })),
    xFindings,
    { threshold: site.settings.thresholds.explainedThreshold, windowDays: settings.crossRefWindowDays, rules, stringKwhPerDay: stringKwh },
  );
  const byId = new Map(all.map((f) => [f.id, f]));
  return {
    threshold: site.settings.thresholds.explainedThreshold,
    windowDays: settings.crossRefWindowDays,
    stringKwhPerDay: stringKwh,
    flags: res.flags.map((r) => {
      const of = openFlags.find((x) => x.f.id === r.flagId)!;
      return {
        flagId: r.flagId,
        combiner: of.combinerName,
        combinerId: of.f.combinerId,
        stringCount: of.stringCount,
        state: of.f.state,
        stringsOut: of.f.stringsOut,
        lostKwhPerDay: of.f.lostKwhPerDay,
        explainedFraction: r.explainedFraction,
        stringsToCheck: r.stringsToCheck,
        advice: r.advice,
        matched: r.matched.map((m) => ({ ...m, className: anomalyClass(m.classKey)?.name ?? m.classKey, deltaTK: byId.get(m.findingId)?.deltaTK ?? null })),
      };
    }),
    unflagged: res.unflagged.map((u) => {
      const f = byId.get(u.findingId)!;
      return { ...u, combiner: f.combiner, stringNumber: f.stringNumber, className: f.className, deltaTK: f.deltaTK, severity: effectiveRule(f.classKey, rules).severity };
    }),
  };
}
