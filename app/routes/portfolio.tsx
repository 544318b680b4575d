import { Link } from "react-router";
import type { Route } from "./+types/portfolio";
import { requirePermission } from "~/services/session.server";
import { listSitesFor } from "~/models/sites.server";
import { EmptyState } from "~/components/empty-state";
import { can } from "~/permissions";

export const meta: Route.MetaFunction = () => [{ title: "Portfolio · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requirePermission(request, "site:view");
  const sites = await listSitesFor(principal);
  return {
    canAdd: can(principal.roles, "site:edit"),
    sites: sites.map((s) => ({
      id: s.id,
      name: s.name,
      timezone: s.timezone,
      dcKw: s.settings.dcCapacityKw,
      currency: s.settings.currency,
    })),
  };
}

export default function Portfolio({ loaderData }: Route.ComponentProps) {
  const { sites } = loaderData;
  return (
    <div className="space-y-4">
      <div className="flex items-center justify-between">
        <h1 className="h1">Portfolio</h1>
        {loaderData.canAdd ? <Link className="btn" to="/sites/new">Add a site</Link> : null}
      </div>
      {sites.length === 0 ? (
        <EmptyState title="No sites yet">An administrator or performance engineer adds a site under Settings, then imports its layout and production data.</EmptyState>
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
              </tr>
            </thead>
            <tbody>
              {sites.map((s) => (
                <tr key={s.id}>
                  <td><Link className="font-medium text-brand underline" to={`/sites/${s.id}`}>{s.name}</Link></td>
                  <td>{(s.dcKw / 1000).toFixed(1)} MWdc</td>
                  <td>{s.timezone}</td>
                  <td className="text-muted">No analysis yet</td>
                  <td className="text-muted">No verified repairs yet</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
