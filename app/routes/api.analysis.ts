import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/api.analysis";
import { requireSiteApi } from "~/services/site-api.server";
import { queueAnalysis } from "~/jobs/analysis.server";
import { latestRun } from "~/models/analysis.server";

const body = z.object({
  fromDay: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional(),
  toDay: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional(),
});

/** GET: the latest run of the site. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteApi(request, params.siteId, "site:view", "read");
  const run = await latestRun(site.id);
  return Response.json({ run });
}

/** POST: start a run (body JSON or form: fromDay, toDay optional); answers 202 with its status URL. */
export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "POST") throw data({ error: "Use POST" }, { status: 405 });
  const { site } = await requireSiteApi(request, params.siteId, "analysis:run", "write");
  const raw = request.headers.get("content-type")?.includes("json") ? await request.json().catch(() => ({})) : Object.fromEntries(await request.formData());
  const parsed = body.safeParse(raw ?? {});
  if (!parsed.success) return Response.json({ error: "fromDay and toDay are YYYY-MM-DD dates" }, { status: 400 });
  const { runId, jobId } = await queueAnalysis({ siteId: site.id, ...parsed.data, trigger: "api" });
  return Response.json({ runId, jobId, statusUrl: `/api/v1/sites/${site.id}/analysis/${runId}` }, { status: 202 });
}
