import type { Route } from "./+types/site-flights";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Flights · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "flights:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Flights <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No flights logged">Pilots log infrared flights and import their findings here.</EmptyState>
    </div>
  );
}
