import { Link } from "react-router";
import type { Route } from "./+types/site-recovery-report";
import { requireSite } from "~/services/session.server";
import { listRecoveries, monthlyKwh } from "~/models/recovery.server";
import { listWorkOrders } from "~/models/work-orders.server";
import { formatNumber } from "~/domain/work-orders";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Recovery report ${data?.month ?? ""} · Sunsift` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "recovery:view");
  const { rows, lastDay } = await listRecoveries(site.id);
  const q = new URL(request.url).searchParams.get("month");
  const month = q && /^\d{4}-\d{2}$/.test(q) ? q : (lastDay ?? new Date().toISOString()).slice(0, 7);
  const tariff = site.settings.tariffPerMwh;
  const perRepair = rows
    .filter((r) => r.status === "recovered" && r.kwhPerDay && lastDay)
    .map((r) => ({ ...r, monthKwh: monthlyKwh(r.repairedOn, r.kwhPerDay!, lastDay!).get(month) ?? 0 }))
    .filter((r) => r.monthKwh > 0);
  const done = (await listWorkOrders(site.id, { states: ["done"], pageSize: 200 })).items.filter((w) => w.closedAt && new Date(w.closedAt).toISOString().slice(0, 7) === month);
  const kwh = perRepair.reduce((s, r) => s + r.monthKwh, 0);
  return {
    site: { id: site.id, name: site.name, currency: site.settings.currency },
    month,
    lastDay,
    perRepair,
    done,
    kwh,
    money: (kwh / 1000) * tariff,
    waiting: rows.filter((r) => r.status === "verifying").length,
    notRecovered: rows.filter((r) => r.status === "not recovered" && r.repairedOn.slice(0, 7) === month),
  };
}

const fmt = (x: number, d = 0) => x.toLocaleString("en", { maximumFractionDigits: d, minimumFractionDigits: d });

export default function Report({ loaderData: d }: Route.ComponentProps) {
  return (
    <article className="mx-auto max-w-3xl space-y-5 bg-white p-6 print:p-0">
      <div className="flex items-center justify-between print:hidden">
        <Link className="text-brand underline" to={`/sites/${d.site.id}/recovery`}>← Recovery</Link>
        <button type="button" className="btn" onClick={() => window.print()}>Print</button>
      </div>
      <header>
        <p className="text-sm text-muted">Sunsift · monthly recovery report</p>
        <h1 className="h1">{d.site.name} — {d.month}</h1>
        <p className="text-sm text-muted">Data analysed up to {d.lastDay ?? "—"}.</p>
      </header>
      <section className="grid grid-cols-3 gap-3">
        <div className="rounded border border-line p-3"><p className="text-sm text-muted">Recovered this month</p><p className="text-xl font-semibold" data-testid="report-kwh">{fmt(d.kwh)} kWh</p></div>
        <div className="rounded border border-line p-3"><p className="text-sm text-muted">Value</p><p className="text-xl font-semibold">{fmt(d.money, 2)} {d.site.currency}</p></div>
        <div className="rounded border border-line p-3"><p className="text-sm text-muted">Work orders closed</p><p className="text-xl font-semibold">{d.done.length}</p></div>
      </section>
      <section>
        <h2 className="h2">Verified repairs contributing this month</h2>
        {d.perRepair.length === 0 ? <p className="text-muted">None.</p> : (
          <table className="table">
            <thead><tr><th>Work order</th><th>Combiner</th><th>Repaired</th><th>Strings back</th><th>kWh this month</th></tr></thead>
            <tbody>
              {d.perRepair.map((r) => (
                <tr key={r.workOrderId}><td>{formatNumber(r.number)}</td><td>{r.combiner}</td><td>{r.repairedOn}</td><td>{r.recoveredStrings}</td><td>{fmt(r.monthKwh)}</td></tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      <section>
        <h2 className="h2">Work orders closed in {d.month}</h2>
        {d.done.length === 0 ? <p className="text-muted">None.</p> : (
          <ul className="list-disc pl-5">
            {d.done.map((w) => <li key={w.id}>{formatNumber(w.number)} {w.title}{w.resolution ? ` — found: ${w.resolution}` : ""}</li>)}
          </ul>
        )}
      </section>
      {d.notRecovered.length ? (
        <section>
          <h2 className="h2">Repairs the data did not confirm</h2>
          <ul className="list-disc pl-5">{d.notRecovered.map((r) => <li key={r.workOrderId}>{formatNumber(r.number)} {r.combiner}: {r.message}</li>)}</ul>
        </section>
      ) : null}
      {d.waiting ? <p className="text-sm text-muted">{d.waiting} repair{d.waiting === 1 ? " is" : "s are"} still waiting for enough clean days to be verified.</p> : null}
    </article>
  );
}
