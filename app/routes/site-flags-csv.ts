import type { Route } from "./+types/site-flags-csv";
import { requireSiteResource } from "~/services/session.server";
import { listAllFlags, toCsv } from "~/models/flags.server";
import { FLAG_STATES, type FlagState } from "~/db/schema";


/** The flags table as CSV (same filter as the screen, every matching flag, not one page); cells that start like a formula are neutralised. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteResource(request, params.siteId, "flags:view");
  const url = new URL(request.url);
  const st = url.searchParams.get("state") ?? "open";
  const state = st === "all" || (FLAG_STATES as readonly string[]).includes(st) ? (st as FlagState | "all") : "open";
  const items = await listAllFlags(site.id, { state, q: url.searchParams.get("q") || undefined });
  const cur = site.settings.currency;
  const csv = toCsv([
    ["combiner", "block", "strings out", "strings on combiner", "confidence", "lost kWh/day", `lost ${cur}/day`, "lost kWh to date", "since", "last day", "state", "reason"],
    ...items.map((f) => [
      f.combiner,
      f.block,
      f.stringsOut,
      f.stringCount,
      f.confidence,
      Math.round(f.lostKwhPerDay * 10) / 10,
      Math.round((f.lostKwhPerDay / 1000) * site.settings.tariffPerMwh * 100) / 100,
      Math.round(f.lostKwhToDate),
      f.firstDay,
      f.lastDay,
      f.state,
      f.stateReason,
    ]),
  ]);
  const name = `flags-${site.name.replace(/[^A-Za-z0-9]+/g, "-").toLowerCase()}.csv`;
  return new Response(csv, { headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${name}"` } });
}
