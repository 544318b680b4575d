import { and, asc, count, desc, eq, inArray } from "drizzle-orm";
import { db } from "~/db/client.server";
import { devices, imports, mappingTemplates, type Import, type Site } from "~/db/schema";
import { env } from "~/env.server";
import {
  detectFileProblems,
  inspectSample,
  mappingSchema,
  validateMapping,
  type Device,
  type Inspection,
  type Mapping,
} from "~/domain/import";
import { enqueue } from "~/jobs/queue.server";
import { deleteObject, newObjectKey, objectSize, presignPut, putObject, readHead } from "~/services/storage.server";
import { audit } from "~/services/audit.server";
import type { Readable } from "node:stream";

/**
 * Production-export imports: the upload record, the mapping review and the queued job. Every
 * function takes a site the caller already loaded through requireSite / requireTokenSite (which
 * scoped it to the caller's organisation) or scopes by organisation itself.
 */

export const SAMPLE_BYTES = 256 * 1024;
export const STORE_DOWN = "The file store is not answering, so the file was not stored and nothing was imported. Try again in a moment.";
export const IMPORT_JOB = "import-readings";

export interface Actor {
  orgId: string;
  userId: string | null;
}

/** Combiners and inverters of the layout plus the site's weather stations, with their ids. */
export async function siteDevices(site: Pick<Site, "id" | "settings">): Promise<{ list: Device[]; ids: Map<string, number> }> {
  const stations = site.settings.metStations ?? ["MET1"];
  // Weather stations live in site settings; readings need a device id, so they get a row.
  if (stations.length)
    await db()
      .insert(devices)
      .values(stations.map((name) => ({ siteId: site.id, kind: "met" as const, name })))
      .onConflictDoNothing();
  const rows = await db()
    .select({ id: devices.id, name: devices.name, kind: devices.kind })
    .from(devices)
    .where(eq(devices.siteId, site.id))
    .orderBy(asc(devices.kind), asc(devices.name));
  const list = rows.filter((r) => r.kind !== "met" || stations.includes(r.name)).map((r) => ({ name: r.name, kind: r.kind }));
  return { list, ids: new Map(rows.map((r) => [r.name, r.id])) };
}

export async function hasLayout(siteId: string): Promise<boolean> {
  const [row] = await db()
    .select({ n: count() })
    .from(devices)
    .where(and(eq(devices.siteId, siteId), inArray(devices.kind, ["combiner", "inverter"])));
  return (row?.n ?? 0) > 0;
}

export function maxUploadBytes(): number {
  return env().UPLOAD_MAX_BYTES;
}

export function formatBytes(n: number): string {
  if (n >= 1024 ** 3) return `${(n / 1024 ** 3).toFixed(1)} GB`;
  if (n >= 1024 ** 2) return `${(n / 1024 ** 2).toFixed(1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(0)} KB`;
  return `${n} bytes`;
}

/** Checks the size, records the upload and signs a PUT for the browser. */
export async function createUpload(actor: Actor, site: Pick<Site, "id">, file: { name: string; size: number }) {
  const max = maxUploadBytes();
  if (!(file.size > 0)) return { ok: false as const, error: "The file is empty." };
  if (file.size > max) return { ok: false as const, error: `The file is ${formatBytes(file.size)}; the limit is ${formatBytes(max)}.` };
  const objectKey = newObjectKey(`imports/${site.id}`, file.name);
  let url: string;
  try {
    url = await presignPut(objectKey);
  } catch {
    return { ok: false as const, error: STORE_DOWN };
  }
  const [row] = await db()
    .insert(imports)
    .values({ orgId: actor.orgId, siteId: site.id, kind: "readings", status: "uploading", fileName: file.name.slice(0, 255), objectKey, sizeBytes: file.size, createdBy: actor.userId })
    .returning({ id: imports.id });
  return { ok: true as const, importId: row!.id, url };
}

/** After the browser's PUT: the stored object decides the size, and the limit applies to it. */
export async function markUploaded(actor: Actor, site: Pick<Site, "id">, importId: string) {
  const imp = await getImport(actor.orgId, importId, site.id);
  if (!imp) return { ok: false as const, error: "No such import." };
  if (imp.status !== "uploading") return { ok: true as const, importId: imp.id };
  const size = await objectSize(imp.objectKey);
  if (size === null) return { ok: false as const, error: "The upload did not arrive in storage; try again." };
  if (size > maxUploadBytes()) {
    await refuseOversize(imp.id, imp.objectKey, size);
    return { ok: false as const, error: "The file is over the size limit." };
  }
  await db().update(imports).set({ status: "uploaded", sizeBytes: size }).where(eq(imports.id, imp.id));
  await audit({ orgId: actor.orgId, userId: actor.userId, action: "import.upload", entity: "import", entityId: imp.id, detail: { fileName: imp.fileName, size } });
  return { ok: true as const, importId: imp.id };
}

export const FILE_GONE = "The file is no longer stored (it was refused or removed); upload it again.";

function oversizeMessage(size: number): string {
  return `The file is ${formatBytes(size)}; the limit is ${formatBytes(maxUploadBytes())}. It was not imported and has been removed; upload a smaller file.`;
}

/** A stored file over the limit: removed from storage, and its import failed with the reason. */
async function refuseOversize(importId: string, objectKey: string, size: number): Promise<string> {
  const error = oversizeMessage(size);
  await deleteObject(objectKey).catch((e: unknown) => console.warn(`import ${importId}: oversize file not removed:`, e instanceof Error ? e.message : e));
  await db().update(imports).set({ status: "failed", sizeBytes: size, error, finishedAt: new Date() }).where(eq(imports.id, importId));
  return error;
}

/**
 * Before an import is started: the stored object itself (which a second PUT to the same signed
 * URL can have replaced since the upload was checked) must exist and be within the limit.
 * An oversize one is removed and its import failed.
 */
export async function checkStoredFile(imp: Pick<Import, "id" | "objectKey">): Promise<{ ok: true; size: number } | { ok: false; error: string }> {
  const size = await objectSize(imp.objectKey);
  if (size === null) return { ok: false, error: FILE_GONE };
  if (size > maxUploadBytes()) return { ok: false, error: await refuseOversize(imp.id, imp.objectKey, size) };
  return { ok: true, size };
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** An import of the organisation (and of the site, when given), or null. */
export async function getImport(orgId: string, importId: string | undefined, siteId?: string): Promise<Import | null> {
  if (!importId || !UUID.test(importId)) return null;
  const conds = [eq(imports.id, importId), eq(imports.orgId, orgId), eq(imports.kind, "readings")];
  if (siteId) conds.push(eq(imports.siteId, siteId));
  const [row] = await db().select().from(imports).where(and(...conds)).limit(1);
  return row ?? null;
}

export async function latestImport(orgId: string, siteId: string): Promise<Import | null> {
  const [row] = await db()
    .select()
    .from(imports)
    .where(and(eq(imports.orgId, orgId), eq(imports.siteId, siteId), eq(imports.kind, "readings")))
    .orderBy(desc(imports.createdAt))
    .limit(1);
  return row ?? null;
}

export const HISTORY_PAGE = 20;

export async function listImports(orgId: string, siteId: string, page: number) {
  const where = and(eq(imports.orgId, orgId), eq(imports.siteId, siteId), eq(imports.kind, "readings"));
  const [total] = await db().select({ n: count() }).from(imports).where(where);
  const rows = await db()
    .select({
      id: imports.id,
      fileName: imports.fileName,
      status: imports.status,
      sizeBytes: imports.sizeBytes,
      rowsAccepted: imports.rowsAccepted,
      rowsRejected: imports.rowsRejected,
      readingsLoaded: imports.readingsLoaded,
      createdAt: imports.createdAt,
      finishedAt: imports.finishedAt,
      error: imports.error,
    })
    .from(imports)
    .where(where)
    .orderBy(desc(imports.createdAt))
    .limit(HISTORY_PAGE)
    .offset((page - 1) * HISTORY_PAGE);
  return { rows, total: total?.n ?? 0 };
}

export async function listTemplates(siteId: string) {
  return db().select({ name: mappingTemplates.name, mapping: mappingTemplates.mapping }).from(mappingTemplates).where(eq(mappingTemplates.siteId, siteId)).orderBy(asc(mappingTemplates.name));
}

export async function getTemplate(siteId: string, name: string): Promise<Mapping | null> {
  const [row] = await db().select().from(mappingTemplates).where(and(eq(mappingTemplates.siteId, siteId), eq(mappingTemplates.name, name))).limit(1);
  if (!row) return null;
  const parsed = mappingSchema.safeParse(row.mapping);
  return parsed.success ? (parsed.data as Mapping) : null;
}

export async function saveTemplate(siteId: string, name: string, mapping: Mapping): Promise<void> {
  await db()
    .insert(mappingTemplates)
    .values({ siteId, name, mapping })
    .onConflictDoUpdate({ target: [mappingTemplates.siteId, mappingTemplates.name], set: { mapping, updatedAt: new Date() } });
}

export type SampleResult = { ok: true; inspection: Extract<Inspection, { ok: true }>; devices: Device[] } | { ok: false; line: number | null; reason: string };

/** Reads the start of the stored file and inspects it: what the mapping screen shows. */
export async function inspectImport(site: Pick<Site, "id" | "settings" | "timezone">, imp: Import, template?: Mapping): Promise<SampleResult> {
  const stored = await objectSize(imp.objectKey);
  if (stored === null) return { ok: false, line: null, reason: FILE_GONE };
  const size = stored;
  const head = size > 0 ? await readHead(imp.objectKey, SAMPLE_BYTES) : Buffer.alloc(0);
  const problem = detectFileProblems(head);
  if (problem) return { ok: false, line: null, reason: problem };
  const text = new TextDecoder("utf-8").decode(head);
  const { list } = await siteDevices(site);
  const inspection = inspectSample(text, { devices: list, zone: site.timezone, isComplete: size <= SAMPLE_BYTES, ...(template ? { template } : {}) });
  if (!inspection.ok) return { ok: false, line: inspection.line, reason: inspection.reason };
  return { ok: true, inspection, devices: list };
}

/** Saves the reviewed mapping and queues the job; refuses a mapping that cannot run. */
export async function startImport(actor: Actor, site: Pick<Site, "id" | "settings" | "timezone">, imp: Import, mapping: Mapping, opts: { templateName?: string } = {}) {
  if (!["uploaded", "mapping", "failed"].includes(imp.status))
    return { ok: false as const, errors: [`This import is ${imp.status}; it cannot be started again.`] };
  const stored = await checkStoredFile(imp);
  if (!stored.ok) return { ok: false as const, errors: [stored.error] };
  const sample = await inspectImport(site, imp);
  if (!sample.ok) return { ok: false as const, errors: [sample.line ? `Line ${sample.line}: ${sample.reason}` : sample.reason] };
  const errors = validateMapping(mapping, sample.inspection.headers, sample.devices);
  if (errors.length) return { ok: false as const, errors };
  if (opts.templateName) await saveTemplate(site.id, opts.templateName, mapping);
  const queued = await queueImport(imp.id, { mapping, format: mapping.format, templateName: opts.templateName ?? null });
  if (!queued.ok) return { ok: false as const, errors: [queued.error] };
  await audit({ orgId: actor.orgId, userId: actor.userId, action: "import.start", entity: "import", entityId: imp.id });
  return { ok: true as const };
}

export const QUEUE_DOWN = "The import could not be queued: the job queue is not answering. Nothing was loaded; start it again in a moment.";

/**
 * Marks the import queued, then queues its job. `started_at` is when a person started it (the
 * worker sets it again when it takes the job); the worker's sweep fails an import queued for 30
 * minutes. A job that cannot be queued marks the import failed at once, with the reason.
 */
async function queueImport(importId: string, set: { mapping: Mapping | null; format: "long" | "wide" | null; templateName: string | null }): Promise<{ ok: true } | { ok: false; error: string }> {
  await db()
    .update(imports)
    .set({ ...set, status: "queued", error: null, progressBytes: 0, timezone: null, jobId: null, startedAt: new Date(), finishedAt: null })
    .where(eq(imports.id, importId));
  // The job row lives in PostgreSQL (pg-boss), so a restart of either process loses nothing.
  let jobId: string;
  try {
    jobId = await enqueue(IMPORT_JOB, { importId }, { retryLimit: 0 });
  } catch (e) {
    console.warn(`import ${importId}: not queued:`, e instanceof Error ? e.message : e);
    await db()
      .update(imports)
      .set({ status: "failed", error: QUEUE_DOWN, finishedAt: new Date() })
      .where(and(eq(imports.id, importId), eq(imports.status, "queued")));
    return { ok: false, error: QUEUE_DOWN };
  }
  await db().update(imports).set({ jobId }).where(eq(imports.id, importId));
  return { ok: true };
}

/**
 * An import from the API: the request body is streamed to storage first (the record of what
 * arrived), then the same job runs with the named template or the proposed mapping.
 */
export async function createApiImport(
  actor: Actor,
  site: Pick<Site, "id">,
  body: Readable,
  opts: { format: "long" | "wide" | null; templateName: string | null; contentLength: number | null; fileName: string },
) {
  let mapping: Mapping | null = null;
  if (opts.templateName) {
    mapping = await getTemplate(site.id, opts.templateName);
    if (!mapping) return { ok: false as const, status: 400, error: `No mapping template named "${opts.templateName}" for this site.` };
  }
  const max = maxUploadBytes();
  if (opts.contentLength !== null && opts.contentLength > max)
    return { ok: false as const, status: 413, error: `The body is ${formatBytes(opts.contentLength)}; the limit is ${formatBytes(max)}.` };
  const objectKey = newObjectKey(`imports/${site.id}`, opts.fileName);
  const [row] = await db()
    .insert(imports)
    .values({ orgId: actor.orgId, siteId: site.id, kind: "readings", status: "uploading", fileName: opts.fileName, objectKey, format: opts.format, templateName: opts.templateName, createdBy: actor.userId })
    .returning({ id: imports.id });
  const importId = row!.id;
  let size: number;
  if (opts.contentLength !== null) {
    try {
      await putObject(objectKey, body, opts.contentLength);
    } catch (e) {
      console.warn(`import ${importId}: the object store refused the upload:`, e instanceof Error ? e.message : e);
      await db().update(imports).set({ status: "failed", error: STORE_DOWN, finishedAt: new Date() }).where(eq(imports.id, importId));
      return { ok: false as const, status: 503, error: STORE_DOWN };
    }
    size = opts.contentLength;
  } else {
    // Without a length the SDK cannot stream a PUT: spool to a temporary file first, within the limit.
    const spooled = await spool(body, max);
    if (!spooled.ok) {
      await db().update(imports).set({ status: "failed", error: spooled.error, finishedAt: new Date() }).where(eq(imports.id, importId));
      return { ok: false as const, status: 413, error: spooled.error };
    }
    try {
      const { createReadStream } = await import("node:fs");
      await putObject(objectKey, createReadStream(spooled.path), spooled.size);
    } finally {
      await spooled.cleanup();
    }
    size = spooled.size;
  }
  await db().update(imports).set({ status: "uploaded", sizeBytes: size }).where(eq(imports.id, importId));
  const queued = await queueImport(importId, { mapping, format: opts.format, templateName: opts.templateName });
  if (!queued.ok) return { ok: false as const, status: 503, error: queued.error };
  return { ok: true as const, importId };
}

async function spool(body: Readable, max: number) {
  const { createWriteStream } = await import("node:fs");
  const { rm, mkdtemp } = await import("node:fs/promises");
  const { tmpdir } = await import("node:os");
  const { join } = await import("node:path");
  const dir = await mkdtemp(join(tmpdir(), "sunsift-upload-"));
  const path = join(dir, "body.csv");
  const cleanup = () => rm(dir, { recursive: true, force: true });
  let size = 0;
  const out = createWriteStream(path);
  try {
    for await (const chunk of body) {
      size += (chunk as Buffer).length;
      if (size > max) {
        out.destroy();
        await cleanup();
        return { ok: false as const, error: `The body is over the limit of ${formatBytes(max)}.` };
      }
      if (!out.write(chunk)) await new Promise<void>((r) => out.once("drain", () => r()));
    }
    await new Promise<void>((resolve, reject) => out.end((e?: Error | null) => (e ? reject(e) : resolve())));
  } catch (e) {
    out.destroy();
    await cleanup();
    throw e;
  }
  return { ok: true as const, path, size, cleanup };
}

/** The import as the API and the progress poll show it. */
export function importStatus(imp: Import) {
  const summary = (imp.summary ?? {}) as Record<string, unknown>;
  return {
    id: imp.id,
    siteId: imp.siteId,
    status: imp.status,
    fileName: imp.fileName,
    format: imp.format,
    sizeBytes: imp.sizeBytes,
    progressBytes: imp.progressBytes,
    progress: imp.status === "done" ? 1 : imp.sizeBytes ? Math.min(1, imp.progressBytes / imp.sizeBytes) : 0,
    rowsAccepted: imp.rowsAccepted,
    rowsRejected: imp.rowsRejected,
    readingsLoaded: imp.readingsLoaded,
    intervalSeconds: imp.intervalSeconds,
    summary,
    firstErrors: imp.firstErrors ?? [],
    hasRejectReport: imp.rejectReportKey !== null,
    error: imp.error,
    createdAt: imp.createdAt.toISOString(),
    startedAt: imp.startedAt?.toISOString() ?? null,
    finishedAt: imp.finishedAt?.toISOString() ?? null,
  };
}

export type ImportStatus = ReturnType<typeof importStatus>;
