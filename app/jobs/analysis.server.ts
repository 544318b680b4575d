/**
 * The "analysis" queue: after every import (the days it touched) and on demand. Data:
 * `{ siteId, fromDay?, toDay?, trigger, runId? }`; a run row is created when the caller did not.
 */
import { z } from "zod";
import { and, desc, eq, inArray, sql } from "drizzle-orm";
import { db, pool } from "~/db/client.server";
import { analysisRuns } from "~/db/schema";
import { createRun, runAnalysis } from "~/models/analysis.server";
import { crossReferenceSite } from "~/models/findings.server";
import { boss, enqueue } from "./queue.server";
import { verifyRecoveries } from "~/models/recovery.server";

const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/);
export const analysisJobSchema = z.object({
  siteId: z.string().uuid(),
  fromDay: day.optional(),
  toDay: day.optional(),
  trigger: z.enum(["import", "manual", "api", "seed"]).default("manual"),
  runId: z.string().uuid().optional(),
});
export type AnalysisJob = z.input<typeof analysisJobSchema>;

/** Runs people ask for (the overview's button, the API); import runs cover the days they touched. */
const ON_DEMAND = ["manual", "api"] as const;
/** A run row whose job is still being queued (no job id yet) counts as alive this long. */
const QUEUEING_MS = 60_000;

/**
 * Queue a run; answers the run id (for the status URL) and the job id. A run asked for on demand
 * (manual, api) while another on-demand run of the site is queued or running answers with that
 * run (`existing: true`) instead of queueing a second one: the check and the new row are made under
 * a transaction lock per site, so requests arriving together get one run. Runs of one site run one
 * after the other anyway (an advisory lock in runAnalysis).
 */
export async function queueAnalysis(job: AnalysisJob): Promise<{ runId: string; jobId: string | null; existing: boolean }> {
  const data = analysisJobSchema.parse(job);
  if (data.runId || !(ON_DEMAND as readonly string[]).includes(data.trigger)) {
    const runId = data.runId ?? (await createRun(data.siteId, data));
    let jobId: string;
    try {
      jobId = await enqueue("analysis", { ...data, runId }, { retryLimit: 1 });
    } catch (e) {
      await markNotQueued(runId);
      throw e;
    }
    await db().update(analysisRuns).set({ jobId }).where(eq(analysisRuns.id, runId));
    return { runId, jobId, existing: false };
  }
  const found = await db().transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext('analysis-request:' || ${data.siteId}))`);
    const active = await tx
      .select({ id: analysisRuns.id, jobId: analysisRuns.jobId, createdAt: analysisRuns.createdAt })
      .from(analysisRuns)
      .where(and(eq(analysisRuns.siteId, data.siteId), inArray(analysisRuns.status, ["queued", "running"]), inArray(analysisRuns.trigger, [...ON_DEMAND])))
      .orderBy(desc(analysisRuns.createdAt));
    for (const run of active) if (await jobAlive(run)) return { runId: run.id, jobId: run.jobId, existing: true };
    const [run] = await tx
      .insert(analysisRuns)
      .values({ siteId: data.siteId, status: "queued", trigger: data.trigger, fromDay: data.fromDay ?? null, toDay: data.toDay ?? null })
      .returning({ id: analysisRuns.id });
    return { runId: run!.id, jobId: null, existing: false };
  });
  if (found.existing) return found;
  try {
    const jobId = await enqueue("analysis", { ...data, runId: found.runId }, { retryLimit: 1 });
    await db().update(analysisRuns).set({ jobId }).where(eq(analysisRuns.id, found.runId));
    return { runId: found.runId, jobId, existing: false };
  } catch (e) {
    await markNotQueued(found.runId);
    throw e;
  }
}

/**
 * A run whose job could not be queued is not left "queued": it would never start, and the next
 * request would be answered with it. The run says why it never ran.
 */
async function markNotQueued(runId: string): Promise<void> {
  await db().update(analysisRuns).set({ status: "failed", error: ANALYSIS_NOT_QUEUED, finishedAt: new Date() }).where(eq(analysisRuns.id, runId));
}

/** Whether a queued or running run will still finish: its job waits, retries or runs. */
async function jobAlive(run: { jobId: string | null; createdAt: Date }): Promise<boolean> {
  if (!run.jobId) return Date.now() - run.createdAt.getTime() < QUEUEING_MS;
  const j = await (await boss()).getJobById("analysis", run.jobId).catch(() => null);
  return !!j && (j.state === "created" || j.state === "retry" || j.state === "active");
}

export const ANALYSIS_NOT_QUEUED = "The analysis could not be queued: the job queue is not answering. Run it again in a moment.";
export const ANALYSIS_NOT_STARTED = "The analysis did not start within 30 minutes; run it again.";
export const ANALYSIS_INTERRUPTED = "The analysis stopped without finishing (the worker or the database was interrupted); run it again.";
/** Minutes after its creation that a run still queued, or running without its site's lock, is failed. */
export const RUN_LIMIT_MINUTES = 30;

/**
 * Every minute in the worker (and at its start): analysis runs that will never end. A run still
 * queued 30 minutes after it was created lost its job; a run "running" since over 30 minutes
 * whose site's analysis lock nobody holds lost its process or its connection (a run holds the
 * lock while it works, and one waiting for another run of the site waits while that one holds it).
 */
export async function sweepStuckRuns(limitMinutes = RUN_LIMIT_MINUTES): Promise<number> {
  const client = await pool().connect();
  let swept = 0;
  try {
    const queued = await client.query(
      "UPDATE analysis_runs SET status = 'failed', error = $2, finished_at = now() WHERE status = 'queued' AND created_at < now() - make_interval(mins => $1)",
      [limitMinutes, ANALYSIS_NOT_STARTED],
    );
    swept += queued.rowCount ?? 0;
    const running = await client.query<{ id: string; site_id: string }>(
      "SELECT id, site_id FROM analysis_runs WHERE status = 'running' AND created_at < now() - make_interval(mins => $1)",
      [limitMinutes],
    );
    for (const { id, site_id } of running.rows) {
      const got = await client.query<{ ok: boolean }>("SELECT pg_try_advisory_lock(hashtext('analysis:' || $1)) AS ok", [site_id]);
      if (!got.rows[0]?.ok) continue;
      try {
        const r = await client.query("UPDATE analysis_runs SET status = 'failed', error = $2, finished_at = now() WHERE id = $1 AND status = 'running'", [id, ANALYSIS_INTERRUPTED]);
        swept += r.rowCount ?? 0;
      } finally {
        await client.query("SELECT pg_advisory_unlock(hashtext('analysis:' || $1))", [site_id]);
      }
    }
  } finally {
    client.release();
  }
  return swept;
}

export async function handleAnalysisJob(raw: unknown): Promise<void> {
  const data = analysisJobSchema.parse(raw);
  await runAnalysis(data.siteId, data);
  // Flags raised or updated by the run meet the drone findings already on their combiners.
  await crossReferenceSite(data.siteId);
  // New combiner days may complete the after-window of repairs waiting for verification.
  await verifyRecoveries(data.siteId);
}
