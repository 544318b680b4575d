import type { Route } from "./+types/site-recovery";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Recovery · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "recovery:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Recovery <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No verified repairs yet">After a work order is done, the recovered output is verified here from the data.</EmptyState>
    </div>
  );
}
