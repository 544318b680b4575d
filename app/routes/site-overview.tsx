import type { Route } from "./+types/site-overview";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Site overview · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "site:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Site overview <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No analysis yet">Once the layout and production data are imported and analysed, this page shows open loss, flags and the plant map coloured by output.</EmptyState>
    </div>
  );
}
