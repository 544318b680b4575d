import type { Route } from "./+types/site-data";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Data · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "data:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Data <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No production data yet">Upload SCADA exports of combiner currents, inverter power and weather-station readings here.</EmptyState>
    </div>
  );
}
