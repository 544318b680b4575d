/**
 * The "analysis" queue: after every import (the days it touched) and on demand. Data:
 * `{ siteId, fromDay?, toDay?, trigger, runId? }`; a run row is created when the caller did not.
 */
import { z } from "zod";
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
  const jobId = await enqueue("analysis", { ...data, runId }, { retryLimit: 1 });
  return { runId, jobId };
}

export async function handleAnalysisJob(raw: unknown): Promise<void> {
  const data = analysisJobSchema.parse(raw);
  await runAnalysis(data.siteId, data);
  // Flags raised or updated by the run meet the drone findings already on their combiners.
  await crossReferenceSite(data.siteId);
  // New combiner days may complete the after-window of repairs waiting for verification.
  await verifyRecoveries(data.siteId);
}
