import type { Route } from "./+types/site-recovery-csv";
import { requireSite } from "~/services/session.server";
import { listRecoveries } from "~/models/recovery.server";
import { formatNumber } from "~/domain/work-orders";
import { csvCell } from "~/lib/csv-safe";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "recovery:view").catch((e: unknown) => {
    // A resource route has no error page: answer a plain 404 like the screens' "Page not found".
    // requireSite throws data(…, { status: 404 }) (status under `init`) or a Response.
    const status = typeof e === "object" && e !== null ? ((e as { status?: number }).status ?? (e as { init?: { status?: number } }).init?.status) : undefined;
    if (status === 404)
      throw new Response("Page not found", { status: 404, headers: { "Content-Type": "text/plain" } });
    throw e;
  });
  const { rows } = await listRecoveries(site.id);
  const head = ["work_order", "title", "combiner", "strings", "repaired_on", "found", "status", "before_pct_of_peers", "after_pct_of_peers", "strings_back", "kwh_per_day", "kwh_to_date", `value_to_date_${site.settings.currency}`, `value_per_year_${site.settings.currency}`, "message"];
  const lines = [head.join(",")];
  for (const r of rows)
    lines.push(
      [
        formatNumber(r.number),
        r.title,
        r.combiner,
        r.strings.join(" "),
        r.repairedOn,
        r.resolution,
        r.status,
        r.beforeOi == null ? null : (r.beforeOi * 100).toFixed(2),
        r.afterOi == null ? null : (r.afterOi * 100).toFixed(2),
        r.recoveredStrings,
        r.kwhPerDay == null ? null : r.kwhPerDay.toFixed(2),
        r.toDateKwh.toFixed(1),
        ((r.toDateKwh / 1000) * site.settings.tariffPerMwh).toFixed(2),
        r.annualValue == null ? null : r.annualValue.toFixed(2),
        r.message,
      ]
        .map(csvCell)
        .join(","),
    );
  const name = `recovery-${site.name.replace(/[^A-Za-z0-9]+/g, "-").toLowerCase()}.csv`;
  return new Response(lines.join("\r\n") + "\r\n", {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${name}"`, "Cache-Control": "no-store" },
  });
}
