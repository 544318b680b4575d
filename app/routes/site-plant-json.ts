import type { Route } from "./+types/site-plant-json";
import { createHash } from "node:crypto";
import { requireSiteResource } from "~/services/session.server";
import { cached } from "~/services/change-feed.server";
import { plantStrings } from "~/models/analysis-views.server";
import { siteOverviewCached } from "~/models/overview-cache.server";
import type { PlantPositions } from "~/components/plant-positions";


/**
 * GET /sites/:siteId/plant.json — where every string of the site sits, for the plant drawing,
 * as column arrays (string id, combiner id, string number, x, y; strings without a position are
 * left out), and each combiner's name and output relative to its peers on the last analysed day. Fetched by the browser after the page, so a screen does not carry thousands of
 * positions in its own data; answered with an ETag, so a revisit costs a 304.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteResource(request, params.siteId, "site:view");
  const body = await cached(`plant.json:${site.id}:${site.updatedAt.getTime()}`, async () => {
    const [rows, overview] = await Promise.all([plantStrings(site.id), siteOverviewCached(site)]);
    const placed = rows.filter((s) => s.x != null && s.y != null);
    const cs = overview.combiners;
    const json = JSON.stringify({
      strings: {
        id: placed.map((s) => s.id),
        combinerId: placed.map((s) => s.combinerId),
        number: placed.map((s) => s.number),
        x: placed.map((s) => s.x!),
        y: placed.map((s) => s.y!),
      },
      outputs: {
        day: overview.lastDay,
        id: cs.map((c) => c.id),
        name: cs.map((c) => c.name),
        ratio: cs.map((c) => c.ratio),
        stringsOut: cs.map((c) => c.stringsOut),
      },
    } satisfies PlantPositions);
    return { json, etag: `"${createHash("sha1").update(json).digest("base64url")}"` };
  });
  const headers = { "Content-Type": "application/json; charset=utf-8", ETag: body.etag, "Cache-Control": "private, no-cache" };
  if (request.headers.get("if-none-match") === body.etag) return new Response(null, { status: 304, headers });
  return new Response(body.json, { headers });
}

