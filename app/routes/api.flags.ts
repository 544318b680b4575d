import type { Route } from "./+types/api.flags";
import { requireSiteApi } from "~/services/site-api.server";
import { listFlags, FLAG_SORTS, type FlagSort } from "~/models/flags.server";
import { FLAG_STATES, type FlagState } from "~/db/schema";
import { cached } from "~/services/change-feed.server";
import { apiJson, flagsResponse } from "~/lib/api-schemas";

/** GET /api/v1/sites/:siteId/flags?state=open|all|<state>&page=&pageSize= */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteApi(request, params.siteId, "flags:view", "read");
  const url = new URL(request.url);
  const st = url.searchParams.get("state") ?? "open";
  const state = st === "all" || st === "open" || (FLAG_STATES as readonly string[]).includes(st) ? (st as FlagState | "open" | "all") : "open";
  const sort = (FLAG_SORTS as readonly string[]).includes(url.searchParams.get("sort") ?? "") ? (url.searchParams.get("sort") as FlagSort) : "lost";
  const q = { state, sort, page: Number(url.searchParams.get("page") ?? 1) || 1, pageSize: Number(url.searchParams.get("pageSize") ?? 100) || 100 };
  const res = await cached(`flags:${site.id}:api:${JSON.stringify(q)}`, () => listFlags(site.id, q));
  const tariff = site.settings.tariffPerMwh;
  return apiJson(flagsResponse, {
    site: { id: site.id, name: site.name, currency: site.settings.currency },
    total: res.total,
    page: res.page,
    pageSize: res.pageSize,
    flags: res.items.map((f) => ({
      id: f.id,
      combiner: f.combiner,
      combinerId: f.combinerId,
      block: f.block,
      state: f.state,
      open: f.open,
      stringsOut: f.stringsOut,
      stringCount: f.stringCount,
      confidence: f.confidence,
      lostKwhPerDay: round(f.lostKwhPerDay),
      lostKwhToDate: round(f.lostKwhToDate),
      lostMoneyPerDay: round((f.lostKwhPerDay / 1000) * tariff),
      firstDay: f.firstDay,
      lastDay: f.lastDay,
    })),
  });
}

const round = (x: number) => Math.round(x * 10) / 10;
