import { lazy, Suspense, useEffect, useState } from "react";
import { Link } from "react-router";
import type { Route } from "./+types/site-recovery";
import { requireSite } from "~/services/session.server";
import { listRecoveries, monthlyKwh, recoverySeries } from "~/models/recovery.server";
import { formatNumber } from "~/domain/work-orders";
import { EmptyState } from "~/components/empty-state";

const RecoveryChart = lazy(() => import("~/components/charts/recovery-chart"));

export const meta: Route.MetaFunction = () => [{ title: "Recovery · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "recovery:view");
  const { rows, lastDay } = await listRecoveries(site.id);
  const months = new Map<string, number>();
  for (const r of rows)
    if (r.status === "recovered" && r.kwhPerDay && lastDay) for (const [m, k] of monthlyKwh(r.repairedOn, r.kwhPerDay, lastDay)) months.set(m, (months.get(m) ?? 0) + k);
  const series = await Promise.all(rows.slice(0, 20).map((r) => recoverySeries(site.id, r.workOrderId)));
  const tariff = site.settings.tariffPerMwh;
  return {
    site: { id: site.id, name: site.name, currency: site.settings.currency },
    lastDay,
    rows,
    series: Object.fromEntries(rows.slice(0, 20).map((r, i) => [r.workOrderId, series[i]])),
    months: [...months.entries()].sort(([a], [b]) => b.localeCompare(a)).map(([month, kwh]) => ({ month, kwh, money: (kwh / 1000) * tariff })),
    total: {
      kwh: rows.reduce((s, r) => s + r.toDateKwh, 0),
      money: (rows.reduce((s, r) => s + r.toDateKwh, 0) / 1000) * tariff,
      annual: rows.filter((r) => r.status === "recovered").reduce((s, r) => s + (r.annualValue ?? 0), 0),
      verified: rows.filter((r) => r.status === "recovered").length,
      waiting: rows.filter((r) => r.status === "verifying").length,
    },
  };
}

const fmt = (x: number, d = 0) => x.toLocaleString("en", { maximumFractionDigits: d, minimumFractionDigits: d });
const pct = (x: number | null) => (x == null ? "—" : `${(x * 100).toFixed(1)} %`);

const STATUS_STYLE: Record<string, string> = { recovered: "bg-ok text-white", verifying: "bg-paper text-ink border border-line", "not recovered": "bg-bad text-white" };

export default function Screen({ loaderData }: Route.ComponentProps) {
  const { site, rows, total, months, series } = loaderData;
  const [client, setClient] = useState(false);
  useEffect(() => setClient(true), []);
  return (
    <div className="space-y-5">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1 className="h1">Recovery <span className="text-muted">· {site.name}</span></h1>
        <div className="flex gap-2">
          <a className="btn-secondary" href={`/sites/${site.id}/recovery.csv`} download>Download CSV</a>
          <Link className="btn-secondary" to={`/sites/${site.id}/recovery/report${months[0] ? `?month=${months[0].month}` : ""}`}>Monthly report</Link>
        </div>
      </div>
      <div className="grid gap-3 sm:grid-cols-4">
        <div className="panel"><p className="text-sm text-muted">Recovered to date</p><p className="text-2xl font-semibold" data-testid="recovered-kwh">{fmt(total.kwh)} kWh</p><p className="text-muted">{fmt(total.money)} {site.currency}</p></div>
        <div className="panel"><p className="text-sm text-muted">Worth per year (verified repairs)</p><p className="text-2xl font-semibold">{fmt(total.annual)} {site.currency}</p></div>
        <div className="panel"><p className="text-sm text-muted">Verified repairs</p><p className="text-2xl font-semibold">{total.verified}</p></div>
        <div className="panel"><p className="text-sm text-muted">Waiting for data</p><p className="text-2xl font-semibold">{total.waiting}</p></div>
      </div>
      <p className="text-sm text-muted">
        Each repair is checked on the combiner's daily output relative to its peers: the clean days after the repair against the same number before it.
        Recovered energy counts from the day after the repair up to the last analysed day{loaderData.lastDay ? ` (${loaderData.lastDay})` : ""}.
      </p>

      {rows.length === 0 ? (
        <EmptyState title="No repairs to show yet">When a work order on a combiner is closed, its before/after comparison appears here.</EmptyState>
      ) : (
        <>
          <section className="space-y-3">
            <h2 className="h2">Repairs</h2>
            <ul className="grid gap-4 lg:grid-cols-2">
              {rows.map((r) => (
                <li key={r.workOrderId} className="panel space-y-2" data-testid="recovery-row">
                  <div className="flex items-start justify-between gap-2">
                    <div>
                      <p className="text-sm text-muted">{formatNumber(r.number)} · repaired {r.repairedOn} · found: {r.resolution ?? "—"}</p>
                      <p className="font-semibold">{r.combiner}{r.strings.length ? ` / string ${r.strings.join(", ")}` : ""}</p>
                    </div>
                    <span className={`rounded px-2 py-0.5 text-sm font-medium ${STATUS_STYLE[r.status]}`}>{r.status}</span>
                  </div>
                  <p className="text-sm">{r.message}</p>
                  <dl className="grid grid-cols-3 gap-2 text-sm">
                    <div><dt className="text-muted">Before → after</dt><dd>{pct(r.beforeOi)} → {pct(r.afterOi)}</dd></div>
                    <div><dt className="text-muted">Strings back</dt><dd>{r.recoveredStrings ?? "—"}</dd></div>
                    <div><dt className="text-muted">kWh/day</dt><dd>{r.kwhPerDay == null ? "—" : fmt(r.kwhPerDay, 1)}</dd></div>
                  </dl>
                  <div className="min-h-[220px] overflow-x-auto">
                    {client && series[r.workOrderId] ? (
                      <Suspense fallback={<p className="text-muted">Loading chart…</p>}>
                        <RecoveryChart data={series[r.workOrderId]!} title={`${r.combiner}: output relative to peers`} />
                      </Suspense>
                    ) : <p className="text-muted">Loading chart…</p>}
                  </div>
                </li>
              ))}
            </ul>
          </section>
          <section className="panel overflow-x-auto">
            <h2 className="h2">Per month</h2>
            {months.length === 0 ? <p className="text-muted">No verified recovery yet.</p> : (
              <table className="table mt-2">
                <thead><tr><th>Month</th><th>Recovered kWh</th><th>Value ({site.currency})</th><th /></tr></thead>
                <tbody>
                  {months.map((m) => (
                    <tr key={m.month}>
                      <td>{m.month}</td>
                      <td>{fmt(m.kwh)}</td>
                      <td>{fmt(m.money, 2)}</td>
                      <td><Link className="text-brand underline" to={`/sites/${site.id}/recovery/report?month=${m.month}`}>Report</Link></td>
                    </tr>
                  ))}
                </tbody>
              </table>
            )}
          </section>
        </>
      )}
    </div>
  );
}
