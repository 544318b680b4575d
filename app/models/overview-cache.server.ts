import type { Site } from "~/db/schema";
import { pool } from "~/db/client.server";
import { cached } from "~/services/change-feed.server";
import { siteOverview } from "./analysis-views.server";

/** The site overview, shared by the overview screen and plant.json until the analysis or flags change. */
export function siteOverviewCached(site: Site) {
  return cached(`overview:${site.id}:${site.updatedAt.getTime()}`, () => siteOverview(site));
}

/**
 * A stamp that changes whenever an analysis run of the site starts, ends or fails: what the chart
 * series stand on (readings reach them only through a run). Views keyed by it survive flag, work
 * order and flight changes, which the series do not show.
 */
export function analysisStamp(siteId: string): Promise<string> {
  return cached(`analysis-stamp:${siteId}`, async () => {
    const r = await pool().query<{ done: string; fin: string | null; running: string | null }>(
      `select count(*) filter (where status = 'done')::text done, max(finished_at)::text fin,
              string_agg(id::text, ',' order by id) filter (where status = 'running') running
         from analysis_runs where site_id = $1`,
      [siteId],
    );
    const x = r.rows[0]!;
    return `${x.done}|${x.fin ?? ""}|${x.running ?? ""}`;
  });
}
