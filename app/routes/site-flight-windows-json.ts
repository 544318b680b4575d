import type { Route } from "./+types/site-flight-windows-json";
import { requireSiteResource } from "~/services/session.server";
import { cached } from "~/services/change-feed.server";
import { localToday, siteFlightWindows } from "~/models/fly-list.server";
import { timelineView } from "~/components/flight-timeline";


/**
 * GET /sites/:siteId/flight-windows.json — the next 7 days of IR flight windows in 15-minute
 * steps (clear-sky POA, sun position, glare headings), as the fly list draws them. Fetched by the
 * browser after the page; the same for everyone on the site until the local day or the site's
 * settings change.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteResource(request, params.siteId, "flylist:view");
  const today = localToday(site.timezone);
  const json = await cached(`flight-windows.json:${site.id}:${site.updatedAt.getTime()}:${today}`, async () =>
    JSON.stringify({ fromDay: today, days: timelineView(siteFlightWindows(site, { fromDay: today, days: 7 })) }),
  );
  return new Response(json, { headers: { "Content-Type": "application/json; charset=utf-8", "Cache-Control": "private, max-age=300" } });
}
