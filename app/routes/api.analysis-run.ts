import type { Route } from "./+types/api.analysis-run";
import { requireSiteApi } from "~/services/site-api.server";
import { getRun, runFailure } from "~/models/analysis.server";
import { apiJson, apiError, runResponse } from "~/lib/api-schemas";

const UUID = /^[0-9a-f-]{36}$/i;

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteApi(request, params.siteId, "site:view", "read");
  const run = UUID.test(params.runId) ? await getRun(site.id, params.runId) : null;
  if (!run) return apiJson(apiError, { error: "No such analysis run" }, { status: 404 });
  return apiJson(runResponse, {
    runId: run.id,
    status: run.status,
    trigger: run.trigger,
    fromDay: run.fromDay,
    toDay: run.toDay,
    createdAt: run.createdAt.toISOString(),
    finishedAt: run.finishedAt?.toISOString() ?? null,
    error: runFailure(run),
    stats: run.stats,
  });
}
