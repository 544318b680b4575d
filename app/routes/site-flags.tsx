import type { Route } from "./+types/site-flags";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Flags · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "flags:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Flags <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No flags">Flags appear when a combiner stays below its peers for several days.</EmptyState>
    </div>
  );
}
