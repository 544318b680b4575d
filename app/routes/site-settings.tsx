import type { Route } from "./+types/site-settings";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Site settings · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "site:edit");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Site settings <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="Settings">Site settings.</EmptyState>
    </div>
  );
}
