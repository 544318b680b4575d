import { join } from "node:path";
import type { Readable } from "node:stream";
import Papa from "papaparse";
import type pg from "pg";
import { from as copyFrom } from "pg-copy-streams";
import { and, eq } from "drizzle-orm";
import { db, pool } from "~/db/client.server";
import { imports, sites, type Import, type Site } from "~/db/schema";
import { metricCode } from "~/db/unmanaged/readings";
import {
  createLineCounter,
  createRowNormaliser,
  mappingSchema,
  validateMapping,
  type Mapping,
} from "~/domain/import";
import { getTemplate, inspectImport, maxUploadBytes, siteDevices } from "~/models/imports.server";
import { getObjectStream } from "~/services/storage.server";
import { enqueue } from "./queue.server";
import { notifyImportFinished } from "./notifications.server";
import { hasHandler } from "./worker.server";
import { BinaryRows, MAX_LINE_LENGTH, Refusal, RejectReport, TextGate } from "./import-streams.server";

export { MAX_LINE_LENGTH };

/**
 * The production-export import job (queue "import-readings"). Streams the stored file:
 * S3 → byte count and UTF-8 check → line-length guard → papaparse (chunk callback, paused while
 * PostgreSQL catches up) → row normaliser → binary COPY into a temporary staging table. Then, in
 * the same transaction: monthly partitions, one INSERT … ON CONFLICT DO UPDATE into readings
 * (a re-import updates, never doubles) and the import row. Any refusal rolls the whole thing
 * back: readings stay exactly as they were.
 *
 * Partial files: lines that are rejected (unknown device, not a number, duplicate…) go to the
 * reject report and the good lines load. The file is refused as a whole only when it cannot be
 * read (not text, a runaway line, no valid mapping) or when nothing at all could be loaded.
 */

const PROGRESS_EVERY_MS = 1000;

export interface ImportJobData {
  importId: string;
}

export async function importReadingsJob(data: unknown): Promise<void> {
  const importId = (data as ImportJobData | null)?.importId;
  if (typeof importId !== "string") throw new Error("import-readings job without importId");
  // A job that outlived its import's wait (swept as not started, then started again by a person,
  // which queues a job of its own) does nothing: only a queued import is run.
  const [row] = await db().select({ status: imports.status }).from(imports).where(eq(imports.id, importId)).limit(1);
  if (row?.status !== "queued") return;
  await runImport(importId);
  // The uploader hears how it ended (if they chose that e-mail); a mail problem never fails the import.
  await notifyImportFinished(importId).catch((e: unknown) => console.warn(`import ${importId}: notification not sent:`, e instanceof Error ? e.message : e));
}

/**
 * Runs one import to done or failed. Returns the final row. Throws only on unexpected trouble.
 * `maxBytes` (default UPLOAD_MAX_BYTES) caps the bytes read from the stored object: the object
 * may have been replaced after its size was checked, so the stream itself is counted.
 */
export async function runImport(importId: string, opts: { maxBytes?: number } = {}): Promise<Import> {
  const [imp] = await db().select().from(imports).where(eq(imports.id, importId)).limit(1);
  if (!imp) throw new Error(`No import ${importId}`);
  if (imp.status === "done") return imp;
  const [site] = await db().select().from(sites).where(and(eq(sites.id, imp.siteId), eq(sites.orgId, imp.orgId))).limit(1);
  if (!site) throw new Error(`No site for import ${importId}`);
  await db().update(imports).set({ status: "running", startedAt: new Date(), progressBytes: 0, error: null }).where(eq(imports.id, imp.id));
  const loader = new Loader(site, imp, opts.maxBytes ?? maxUploadBytes());
  try {
    await loader.run();
  } catch (e) {
    const message = e instanceof Refusal ? e.message : `The import stopped: ${e instanceof Error ? e.message : String(e)}. Nothing was loaded.`;
    await loader.fail(message);
    if (!(e instanceof Refusal) && !(e instanceof DatabaseRefusal)) console.warn(`import ${imp.id} failed:`, e);
  }
  const [done] = await db().select().from(imports).where(eq(imports.id, imp.id));
  return done!;
}

class DatabaseRefusal extends Error {}

export const INTERRUPTED = "The import was interrupted (the server stopped) — nothing was loaded; start it again.";

export const QUEUED_TOO_LONG = "The import did not start within 30 minutes; start it again.";
/** Minutes an import may wait in the queue before it is marked failed. */
export const QUEUED_LIMIT_MINUTES = 30;

/**
 * At worker start: imports left "running" by a worker that died (SIGKILL, power loss). Their
 * transaction died with the connection, so nothing of them is in readings; their job is not
 * retried (retryLimit 0). One whose lock is still held belongs to a live worker and is left alone.
 * Also every minute in a live worker (an import whose database connection was cut, e.g. by a
 * PostgreSQL restart, could not record its failure): then only imports started over `minAgeSeconds`
 * ago, since an import takes its lock a moment after it is marked running.
 *
 * Imports still "queued" 30 minutes after they were started (`started_at` is set when a person
 * starts the import, and again when the worker takes it) are marked failed too: their job was
 * lost (a process stopped between the row and the job) or never ran. A late job of theirs does
 * nothing (importReadingsJob runs queued imports only).
 */
export async function sweepInterruptedImports(minAgeSeconds = 0): Promise<number> {
  const client = await pool().connect();
  let swept = 0;
  try {
    const queued = await client.query(
      `UPDATE imports SET status = 'failed', error = $2, readings_loaded = 0, finished_at = now()
        WHERE status = 'queued' AND coalesce(started_at, created_at) < now() - make_interval(mins => $1)`,
      [QUEUED_LIMIT_MINUTES, QUEUED_TOO_LONG],
    );
    swept += queued.rowCount ?? 0;
    const running = await client.query<{ id: string }>(
      "SELECT id FROM imports WHERE status = 'running' AND (started_at IS NULL OR started_at < now() - make_interval(secs => $1))",
      [minAgeSeconds],
    );
    for (const { id } of running.rows) {
      const got = await client.query<{ ok: boolean }>("SELECT pg_try_advisory_lock(hashtext('import:' || $1)) AS ok", [id]);
      if (!got.rows[0]?.ok) continue;
      try {
        const r = await client.query(
          "UPDATE imports SET status = 'failed', error = $2, readings_loaded = 0, finished_at = now() WHERE id = $1 AND status = 'running'",
          [id, INTERRUPTED],
        );
        swept += r.rowCount ?? 0;
      } finally {
        await client.query("SELECT pg_advisory_unlock(hashtext('import:' || $1))", [id]);
      }
    }
  } finally {
    client.release();
  }
  return swept;
}

interface SeriesStats {
  n: number;
  min: number;
  max: number;
}

class Loader {
  private client: pg.PoolClient | null = null;
  private readonly report = new RejectReport();
  private progressTimer: NodeJS.Timeout | null = null;
  private gate: TextGate | null = null;
  private body: Readable | null = null;
  private summaryFinal: Record<string, unknown> | null = null;
  /** A COPY is open on the client: no other statement can run on it until it ends. */
  private copying = false;
  private summaryBase: Record<string, unknown> = {};

  constructor(
    private readonly site: Site,
    private readonly imp: Import,
    private readonly maxBytes: number,
  ) {}

  async run(): Promise<void> {
    const { site, imp } = this;
    const template = imp.templateName && !imp.mapping ? await getTemplate(site.id, imp.templateName) : null;
    const sample = await inspectImport(site, imp, template ?? undefined);
    if (!sample.ok) throw new Refusal(sample.line ? `Line ${sample.line}: ${sample.reason} Nothing was loaded.` : `${sample.reason} Nothing was loaded.`);
    const ins = sample.inspection;
    const stored = imp.mapping ? mappingSchema.safeParse(imp.mapping) : null;
    if (stored && !stored.success) throw new Refusal("The saved mapping is not valid; review the mapping again. Nothing was loaded.");
    const mapping: Mapping = stored?.success ? (stored.data as Mapping) : ins.mapping;
    const detected = ins.mapping.format;
    if (imp.format && detected !== imp.format)
      throw new Refusal(
        detected === "long"
          ? `The file has timestamp, device, metric and value columns (a long export), but format=${imp.format} was asked for. Nothing was loaded.`
          : `Line 1: the header has no timestamp, device, metric and value columns, so this is not a long export (format=${imp.format} was asked for). Nothing was loaded.`,
      );
    const { list: devices, ids } = await siteDevices(site);
    const problems = validateMapping(mapping, ins.headers, devices);
    if (problems.length) throw new Refusal(`The mapping cannot be used: ${problems.slice(0, 5).join(" ")} Nothing was loaded.`);
    const convention = site.settings.dataConvention ?? "start";
    if (!ins.interval.ok && convention === "end")
      throw new Refusal(`${ins.interval.reason} The site labels intervals by their end, so the interval is needed. Nothing was loaded.`);
    const intervalSeconds = ins.interval.ok ? ins.interval.seconds : null;
    this.summaryBase = {
      format: mapping.format,
      delimiter: ins.delimiter,
      decimalSeparator: ins.decimalSeparator,
      headerLines: ins.headerLines,
      intervalSeconds,
      intervalNote: ins.interval.ok ? null : ins.interval.reason,
      ...(ins.templateFit ? { templateFit: ins.templateFit } : {}),
    };
    await db().update(imports).set({ mapping, format: mapping.format, timezone: site.timezone, intervalSeconds }).where(eq(imports.id, imp.id));

    const normaliser = createRowNormaliser({
      mapping,
      zone: site.timezone,
      convention,
      // Without a detected interval the value only sizes the duplicate tracker's slots.
      intervalSeconds: intervalSeconds ?? 60,
      devices,
      maxLineLength: MAX_LINE_LENGTH,
      ...(ins.dateOrder ? { dateOrder: ins.dateOrder } : {}),
      decimalSeparator: ins.decimalSeparator,
    });
    await this.report.open();

    const client = await pool().connect();
    this.client = client;
    await client.query("BEGIN");
    // Held until COMMIT or until the connection dies with its process: the startup sweep tells
    // a running import from one whose worker was killed by this lock.
    await client.query("SELECT pg_advisory_xact_lock(hashtext('import:' || $1))", [imp.id]);
    await client.query("CREATE TEMP TABLE import_staging (device_id int, metric smallint, ts timestamptz, value real) ON COMMIT DROP");
    const copy = client.query(copyFrom("COPY import_staging FROM STDIN (FORMAT binary)"));
    this.copying = true;
    const copyDone = new Promise<void>((resolve, reject) => {
      copy.on("finish", resolve);
      copy.on("error", reject);
    });
    copyDone.catch(() => undefined);

    const stagingStarted = performance.now();
    const body = await getObjectStream(imp.objectKey);
    this.body = body;
    const gate = new TextGate(this.maxBytes);
    this.gate = gate;
    this.startProgress();
    const rows = new BinaryRows();
    const series = new Map<number, SeriesStats>();
    const counter = createLineCounter();
    let headerRowsLeft = ins.headerLines;
    // The normaliser caches parsed timestamps by their text. A field from the parser is a slice
    // of its whole chunk of text, so a cached key would keep that chunk alive (thousands of
    // chunks for a long file): hand it a copy of the timestamp instead.
    const tsCol = mapping.timestampColumn;
    let lastTsRaw = "";
    let lastTsCopy = "";
    let blocked = false;
    const report = this.report;
    const codes = new Map<string, number>();

    await new Promise<void>((resolve, reject) => {
      let settled = false;
      const finish = (e?: unknown) => {
        if (settled) return;
        settled = true;
        if (e) reject(e);
        else resolve();
      };
      body.on("error", (e) => finish(e));
      gate.on("error", (e) => finish(e));
      copy.on("error", (e) => finish(new DatabaseRefusal(`The database refused the staged rows: ${e.message}. Nothing was loaded.`)));
      body.pipe(gate);
      Papa.parse<string[]>(gate as unknown as Papa.LocalFile, {
        delimiter: ins.delimiter,
        skipEmptyLines: false,
        chunk: (results, parser) => {
          if (settled) return parser.abort();
          // A quote that never closes swallows the rest of the file into one field: refuse the
          // file naming the line, rather than reading it as one odd value.
          const unclosed = results.errors.find((e) => e.code === "MissingQuotes")?.row ?? -1;
          const data = results.data;
          for (let i = 0; i < data.length; i++) {
            const fields = data[i];
            const line = counter.lineOf(fields);
            if (i === unclosed) {
              // Settle before aborting: abort() calls complete() at once, which would settle as success.
              finish(new Refusal(`Line ${line}: a quoted field opens on this line and is never closed: the file is cut off or malformed. Nothing was loaded.`));
              return parser.abort();
            }
            if (headerRowsLeft > 0) {
              headerRowsLeft--;
              continue;
            }
            const tsRaw = fields[tsCol];
            if (tsRaw !== undefined) {
              if (tsRaw !== lastTsRaw) {
                lastTsRaw = tsRaw;
                lastTsCopy = (" " + tsRaw).slice(1);
              }
              fields[tsCol] = lastTsCopy;
            }
            const r = normaliser.row(fields, line);
            if (r.fatal) {
              finish(new Refusal(`Line ${r.fatal.line}: ${r.fatal.reason}. Nothing was loaded.`));
              return parser.abort();
            }
            for (const x of r.readings) {
              const id = ids.get(x.device)!;
              const m = metricCode(x.metric);
              const full = rows.add(id, m, x.ts, x.value);
              if (full && !copy.write(full)) blocked = true;
              const key = id * 16 + m;
              const s = series.get(key);
              if (!s) series.set(key, { n: 1, min: x.ts, max: x.ts });
              else {
                s.n++;
                if (x.ts < s.min) s.min = x.ts;
                if (x.ts > s.max) s.max = x.ts;
              }
            }
            for (const rej of r.rejects) {
              report.add(rej);
              codes.set(rej.code, (codes.get(rej.code) ?? 0) + 1);
            }
          }
          if (!report.flush()) blocked = true;
          if (blocked) {
            // Back-pressure: stop parsing (and reading) until PostgreSQL and the report catch up.
            blocked = false;
            parser.pause();
            gate.pause();
            Promise.all([copy.writableNeedDrain ? new Promise((r) => copy.once("drain", r)) : null, report.drained()]).then(() => {
              if (settled) return;
              gate.resume();
              parser.resume();
            });
          }
        },
        complete: () => finish(),
        error: (e: Error) => finish(e),
      });
    });

    copy.end(rows.end());
    await copyDone.catch((e: Error) => {
      throw new DatabaseRefusal(`The database refused the staged rows: ${e.message}. Nothing was loaded.`);
    });
    this.copying = false;
    this.stopProgress();
    const stageSeconds = (performance.now() - stagingStarted) / 1000;

    const s = normaliser.summary();
    const dataLines = s.lines - s.blankLines;
    const gaps = intervalSeconds ? gapStats(series, intervalSeconds) : null;
    const summary = {
      ...this.summaryBase,
      devices: s.devicesSeen.length,
      deviceNames: s.devicesSeen.slice(0, 50),
      from: s.minTs === null ? null : new Date(s.minTs).toISOString(),
      to: s.maxTs === null ? null : new Date(s.maxTs).toISOString(),
      lines: s.lines,
      blankLines: s.blankLines,
      readingsInFile: s.readings,
      missingValues: s.missingValues,
      rejectedValues: this.report.count,
      rejectsByCode: Object.fromEntries(codes),
      gaps,
      timings: { stageSeconds: Math.round(stageSeconds * 100) / 100, mergeSeconds: null as number | null, upsert: false },
    };
    this.summaryFinal = summary;
    if (s.readings === 0) {
      const first = this.report.first[0];
      throw new Refusal(
        dataLines === 0
          ? "The file has a header but no data rows. Nothing was loaded."
          : first
            ? `No reading could be loaded: every data line was rejected or empty. First problem: line ${first.line}: ${first.reason}. Nothing was loaded.`
            : "No reading could be loaded: every value is a no-data marker (empty, NaN, −9999, −7999). Nothing was loaded.",
      );
    }

    let loaded = 0;
    const mergeStarted = performance.now();
    try {
      await client.query("SELECT ensure_reading_partitions($1::timestamptz, $2::timestamptz)", [new Date(s.minTs!), new Date(s.maxTs!)]);
      // In key order, the primary-key index is filled leaf after leaf instead of at one insertion
      // point per series (exports are time-major), and each month's heap ends up grouped by
      // device, which is how readings are read back. The sort runs in PostgreSQL, not here.
      await client.query("SET LOCAL work_mem = '128MB'");
      // One merge per site at a time, so that the overlap check below stays true until commit.
      await client.query("SELECT pg_advisory_xact_lock(hashtext('import-merge:' || $1))", [this.site.id]);
      // A first load of a period has nothing to update: a plain insert skips the speculative
      // insertion that ON CONFLICT does for every row (about twice the index work).
      const overlap = await client.query(
        "SELECT EXISTS (SELECT 1 FROM readings WHERE device_id = ANY($1::int[]) AND ts BETWEEN $2 AND $3) AS overlap",
        [[...new Set([...series.keys()].map((k) => Math.floor(k / 16)))], new Date(s.minTs!), new Date(s.maxTs!)],
      );
      const upsert = overlap.rows[0]?.overlap === true;
      const res = await client.query(
        `INSERT INTO readings (device_id, metric, ts, value)
         SELECT device_id, metric, ts, value FROM import_staging ORDER BY device_id, metric, ts
         ${upsert ? "ON CONFLICT (device_id, metric, ts) DO UPDATE SET value = EXCLUDED.value" : ""}`,
      );
      summary.timings.upsert = upsert;
      loaded = res.rowCount ?? 0;
    } catch (e) {
      throw new DatabaseRefusal(`The database refused the merge: ${e instanceof Error ? e.message : String(e)}. Nothing was loaded.`);
    }
    summary.timings.mergeSeconds = Math.round(((performance.now() - mergeStarted) / 1000) * 100) / 100;
    const reportKey = await this.report.store(`imports/${this.imp.siteId}/reports`);
    await client.query(
      `UPDATE imports SET status = 'done', progress_bytes = $2, size_bytes = $2, rows_accepted = $3, rows_rejected = $4, readings_loaded = $5,
         summary = $6, first_errors = $7, reject_report_key = $8, error = NULL, finished_at = now() WHERE id = $1`,
      [this.imp.id, gate.bytes, dataLines - s.rejectedLines, s.rejectedLines, loaded, JSON.stringify(summary), JSON.stringify(this.report.first), reportKey],
    );
    await client.query("COMMIT");
    client.release();
    this.client = null;
    await this.report.close();
    await this.queueAnalysis(s.minTs!, s.maxTs!);
  }

  private async queueAnalysis(minTs: number, maxTs: number) {
    if (!hasHandler("analysis")) return;
    const day = (ms: number) => new Intl.DateTimeFormat("en-CA", { timeZone: this.site.timezone, year: "numeric", month: "2-digit", day: "2-digit" }).format(new Date(ms));
    await enqueue("analysis", { siteId: this.site.id, fromDay: day(minTs), toDay: day(maxTs), trigger: "import" });
  }

  private startProgress() {
    this.progressTimer = setInterval(() => {
      const bytes = this.gate?.bytes ?? 0;
      db().update(imports).set({ progressBytes: bytes }).where(and(eq(imports.id, this.imp.id), eq(imports.status, "running"))).catch(() => undefined);
    }, PROGRESS_EVERY_MS);
  }

  private stopProgress() {
    if (this.progressTimer) clearInterval(this.progressTimer);
    this.progressTimer = null;
  }

  /** Rolls back whatever was staged and records why; the readings table is untouched. */
  async fail(message: string): Promise<void> {
    this.stopProgress();
    this.body?.destroy();
    this.gate?.destroy();
    if (this.client && this.copying) {
      // Dropping the connection aborts the COPY and its transaction on the server side.
      this.client.release(true);
      this.client = null;
    }
    if (this.client) {
      try {
        await this.client.query("ROLLBACK");
        this.client.release();
      } catch {
        // A broken COPY leaves the connection unusable: drop it from the pool.
        this.client.release(true);
      }
      this.client = null;
    }
    let reportKey: string | null = null;
    try {
      reportKey = await this.report.store(`imports/${this.imp.siteId}/reports`);
    } catch {
      reportKey = null;
    }
    await this.report.close();
    await db()
      .update(imports)
      .set({
        status: "failed",
        error: message,
        progressBytes: this.gate?.bytes ?? 0,
        readingsLoaded: 0,
        firstErrors: this.report.first,
        rejectReportKey: reportKey,
        summary: this.summaryFinal ?? { ...this.summaryBase, rejectedValues: this.report.count },
        finishedAt: new Date(),
      })
      .where(eq(imports.id, this.imp.id));
  }
}

/** Missing intervals inside each series' own first…last span. */
function gapStats(series: Map<number, SeriesStats>, intervalSeconds: number) {
  const step = intervalSeconds * 1000;
  let missingIntervals = 0;
  let seriesWithGaps = 0;
  for (const s of series.values()) {
    const expected = Math.floor((s.max - s.min) / step) + 1;
    const missing = Math.max(0, expected - s.n);
    missingIntervals += missing;
    if (missing > 0) seriesWithGaps++;
  }
  return { series: series.size, seriesWithGaps, missingIntervals };
}

