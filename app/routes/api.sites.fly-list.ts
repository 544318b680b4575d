import type { Route } from "./+types/api.sites.fly-list";
import { requireTokenSite } from "~/services/session.server";
import { flyList, localToday, siteFlightWindows } from "~/models/fly-list.server";
import { CLEAR_SKY_MODEL } from "~/domain/flight-timeline";
import { cached } from "~/services/change-feed.server";
import { apiJson, flyListResponse } from "~/lib/api-schemas";

/** GET /api/v1/sites/:siteId/fly-list — blocks ranked by unexplained loss, and the flight windows of the next 7 days. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireTokenSite(request, params.siteId, "read");
  // Both cached: the list until flags, findings or work orders change, the windows for the local day.
  const [list, days] = await Promise.all([
    cached(`fly-list:${site.id}:${site.updatedAt.getTime()}`, () => flyList(site)),
    cached(`flight-windows:${site.id}:${site.updatedAt.getTime()}:${localToday(site.timezone)}`, async () => siteFlightWindows(site, { days: 7 })),
  ]);
  return apiJson(flyListResponse, {
    site: { id: site.id, name: site.name, timezone: site.timezone },
    unit: "kWh/day",
    totalUnexplainedKwhPerDay: list.totalUnexplainedKwhPerDay,
    blocks: list.blocks,
    flightWindows: {
      model: CLEAR_SKY_MODEL.name,
      formula: CLEAR_SKY_MODEL.formula,
      minPoa: site.settings.thresholds.irMinPoa,
      days: days.map((d) => ({ day: d.day, solarNoon: d.solarNoonLocal, windows: d.windows })),
    },
  });
}
