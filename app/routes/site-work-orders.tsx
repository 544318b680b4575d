import type { Route } from "./+types/site-work-orders";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Work orders · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "workorders:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Work orders <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No work orders">Work orders created from flags and findings appear here.</EmptyState>
    </div>
  );
}
