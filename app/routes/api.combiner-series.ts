import type { Route } from "./+types/api.combiner-series";
import { requireSiteApi } from "~/services/site-api.server";
import { combinerSeries } from "~/models/analysis-views.server";
import { cached, keepAnswer } from "~/services/change-feed.server";
import { analysisStamp } from "~/models/overview-cache.server";
import { apiJson, apiError, combinerSeriesResponse, type ApiBody } from "~/lib/api-schemas";

/** GET /api/v1/sites/:siteId/combiners/:combinerId/series?days=60 — chart series as column arrays. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteApi(request, params.siteId, "flags:view", "read");
  const days = Math.min(120, Math.max(1, Number(new URL(request.url).searchParams.get("days") ?? 30) || 30));
  const id = Number(params.combinerId);
  // Kept, as the JSON text it is sent as, until an analysis run of the site starts or ends or its
  // settings change (see change-feed.server.ts): flag and work-order changes leave it alone.
  const stamp = await analysisStamp(site.id);
  const body = Number.isInteger(id) && id > 0 && id < 2 ** 31
    ? await cached(`series:${site.id}:${site.updatedAt.getTime()}:${stamp}:${id}:${days}`, async () => {
        const series: ApiBody<typeof combinerSeriesResponse> | null = await combinerSeries(site, id, days);
        return series ? JSON.stringify(series) : null;
      }, "keyed")
    : null;
  if (!body) return apiJson(apiError, { error: "No such combiner on this site" }, { status: 404 });
  const headers = new Headers({ "Content-Type": "application/json", "Cache-Control": "private, max-age=60" });
  // The whole answer is kept for this session too, so the next ask skips the router (scripts/serve.mjs).
  await keepAnswer(request, 200, headers, body, null);
  return new Response(body, { headers });
}
