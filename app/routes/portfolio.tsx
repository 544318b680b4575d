import { Link } from "react-router";
import type { Route } from "./+types/portfolio";
import { requirePermission } from "~/services/session.server";
import { listSitesFor } from "~/models/sites.server";
import { EmptyState } from "~/components/empty-state";
import { can } from "~/permissions";
import { openLossBySite, recoveryTotals } from "~/models/recovery.server";

export const meta: Route.MetaFunction = () => [{ title: "Portfolio · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requirePermission(request, "site:view");
  const sites = await listSitesFor(principal);
  const ids = sites.map((s) => s.id);
  const [loss, recovered] = await Promise.all([openLossBySite(ids), recoveryTotals(ids)]);
  return {
    canAdd: can(principal.roles, "site:edit"),
    sites: sites.map((s) => ({
      id: s.id,
      name: s.name,
      timezone: s.timezone,
      dcKw: s.settings.dcCapacityKw,
      currency: s.settings.currency,
      openFlags: loss.get(s.id)?.flags ?? 0,
      lossKwhPerDay: loss.get(s.id)?.kwhPerDay ?? 0,
      lossMoneyPerDay: ((loss.get(s.id)?.kwhPerDay ?? 0) / 1000) * s.settings.tariffPerMwh,
      recoveredKwh: recovered.get(s.id)?.recoveredKwh ?? 0,
      recoveredMoney: ((recovered.get(s.id)?.recoveredKwh ?? 0) / 1000) * s.settings.tariffPerMwh,
      repairsDone: recovered.get(s.id)?.repairsDone ?? 0,
      verified: recovered.get(s.id)?.verified ?? 0,
    })),
  };
}

const fmt = (x: number, d = 0) => x.toLocaleString("en", { maximumFractionDigits: d, minimumFractionDigits: d });

export default function Portfolio({ loaderData }: Route.ComponentProps) {
  const { sites } = loaderData;
  return (
    <div className="space-y-4">
      <div className="flex items-center justify-between">
        <h1 className="h1">Portfolio</h1>
        {loaderData.canAdd ? <Link className="btn" to="/sites/new">Add a site</Link> : null}
      </div>
      {sites.length === 0 ? (
        <EmptyState title="No sites yet">
          {loaderData.canAdd
            ? "Add one with “Add a site” above, then import its layout and production data."
            : "An administrator or performance engineer adds a site with “Add a site” on this page, then imports its layout and production data."}
        </EmptyState>
      ) : (
        <div className="panel overflow-x-auto p-0">
          <table className="table">
            <thead>
              <tr>
                <th>Site</th>
                <th>DC capacity</th>
                <th>Time zone</th>
                <th>Open loss</th>
                <th>Recovered to date</th>
                <th>Repairs done</th>
              </tr>
            </thead>
            <tbody>
              {sites.map((s) => (
                <tr key={s.id}>
                  <td><Link className="font-medium text-brand underline" to={`/sites/${s.id}`}>{s.name}</Link></td>
                  <td>{(s.dcKw / 1000).toFixed(1)} MWdc</td>
                  <td>{s.timezone}</td>
                  <td data-testid="open-loss">
                    {s.openFlags ? (
                      <><strong>{fmt(s.lossKwhPerDay, 1)} kWh/day</strong> · {fmt(s.lossMoneyPerDay, 2)} {s.currency}/day<span className="block text-xs text-muted">{s.openFlags} open flag{s.openFlags === 1 ? "" : "s"}</span></>
                    ) : <span className="text-muted">No open flags</span>}
                  </td>
                  <td data-testid="recovered">
                    {s.recoveredKwh > 0 ? <Link className="text-brand underline" to={`/sites/${s.id}/recovery`}>{fmt(s.recoveredKwh)} kWh · {fmt(s.recoveredMoney, 2)} {s.currency}</Link> : <span className="text-muted">No verified repairs yet</span>}
                  </td>
                  <td>{s.repairsDone}{s.verified ? <span className="text-muted"> ({s.verified} verified)</span> : null}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
