/**
 * The "analysis" queue: after every import (the days it touched) and on demand. Data:
 * `{ siteId, fromDay?, toDay?, trigger, runId? }`; a run row is created when the caller did not.
 */
import { z } from "zod";
import { eq } from "drizzle-orm";
import { db, pool } from "~/db/client.server";
import { analysisRuns } from "~/db/schema";
import { createRun, runAnalysis } from "~/models/analysis.server";
import { crossReferenceSite } from "~/models/findings.server";
import { enqueue } from "./queue.server";
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

/** Queue a run; answers the run id (for the status URL) and the job id. */
export async function queueAnalysis(job: AnalysisJob): Promise<{ runId: string; jobId: string }> {
  const data = analysisJobSchema.parse(job);
  const runId = data.runId ?? (await createRun(data.siteId, data));
  // Analyses of one site run one after the other (singletonKey keeps duplicates out while queued).
  let jobId: string;
  try {
    jobId = await enqueue("analysis", { ...data, runId }, { retryLimit: 1 });
  } catch (e) {
    // Not left queued for ever: the run says why it never ran.
    await db().update(analysisRuns).set({ status: "failed", error: ANALYSIS_NOT_QUEUED, finishedAt: new Date() }).where(eq(analysisRuns.id, runId));
    throw e;
  }
  return { runId, jobId };
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
