import type { Route } from "./+types/site-fly-list";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Fly list · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "flylist:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Fly list <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="Nothing to fly yet">Blocks with losses that no finding explains will be ranked here, worst first.</EmptyState>
    </div>
  );
}
