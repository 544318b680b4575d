import { data } from "react-router";
import type { Route } from "./+types/api.analysis";
import { requireSiteApi } from "~/services/site-api.server";
import { queueAnalysis } from "~/jobs/analysis.server";
import { latestRun, runFailure } from "~/models/analysis.server";
import { apiJson, analysisRequest, analysisStarted, apiError, latestRunResponse } from "~/lib/api-schemas";

/** GET: the latest run of the site. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteApi(request, params.siteId, "site:view", "read");
  const run = await latestRun(site.id);
  // A failed run's reason stays in the log and the row; the answer gives plain words and a reference.
  return apiJson(latestRunResponse, {
    run: run && {
      id: run.id,
      siteId: run.siteId,
      status: run.status,
      trigger: run.trigger,
      fromDay: run.fromDay,
      toDay: run.toDay,
      stats: run.stats,
      error: runFailure(run),
      jobId: run.jobId,
      createdAt: run.createdAt.toISOString(),
      finishedAt: run.finishedAt?.toISOString() ?? null,
    },
  });
}

/**
 * POST: start a run (body JSON or form: fromDay, toDay optional); answers 202 with its status URL,
 * or, while an earlier on-demand run of the site is queued or running, 202 with that run.
 */
export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "POST") throw data({ error: "Use POST" }, { status: 405 });
  const { site } = await requireSiteApi(request, params.siteId, "analysis:run", "write");
  const raw = request.headers.get("content-type")?.includes("json") ? await request.json().catch(() => ({})) : Object.fromEntries(await request.formData());
  const parsed = analysisRequest.safeParse(raw ?? {});
  if (!parsed.success) return apiJson(apiError, { error: "fromDay and toDay are YYYY-MM-DD dates" }, { status: 400 });
  // While a run asked for earlier is queued or running, the answer is that run (existing: true).
  const { runId, jobId, existing } = await queueAnalysis({ siteId: site.id, ...parsed.data, trigger: "api" });
  return apiJson(analysisStarted, { runId, jobId, existing, statusUrl: `/api/v1/sites/${site.id}/analysis/${runId}` }, { status: 202 });
}
