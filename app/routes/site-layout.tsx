import type { Route } from "./+types/site-layout";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Layout · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "layout:view");
  return { site: { id: site.id, name: site.name } };
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">Layout <span className="text-muted">· {loaderData.site.name}</span></h1>
      <EmptyState title="No layout imported">A performance engineer imports the plant layout (blocks, inverters, combiners and strings) here.</EmptyState>
    </div>
  );
}
