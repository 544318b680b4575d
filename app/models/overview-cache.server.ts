import type { Site } from "~/db/schema";
import { cached } from "~/services/change-feed.server";
import { siteOverview } from "./analysis-views.server";

/** The site overview, shared by the overview screen and plant.json until the analysis or flags change. */
export function siteOverviewCached(site: Site) {
  return cached(`overview:${site.id}:${site.updatedAt.getTime()}`, () => siteOverview(site));
}
