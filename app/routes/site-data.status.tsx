import type { Route } from "./+types/site-data.status";
import { requireSite } from "~/services/session.server";
import { getImport, importStatus, latestImport } from "~/models/imports.server";

const notFound = () => Response.json({ error: "Page not found: no such import on this site" }, { status: 404 });

function statusOf(e: unknown): number | null {
  return e && typeof e === "object" && "init" in e && e.init && typeof e.init === "object" && "status" in e.init ? Number(e.init.status) : null;
}

/** JSON status of an import, polled by the progress screen. */
export async function loader({ request, params }: Route.LoaderArgs) {
  let access;
  try {
    access = await requireSite(request, params.siteId, "data:view");
  } catch (e) {
    // Another organisation's site answers like a missing one, as JSON.
    if (statusOf(e) === 404) return notFound();
    throw e;
  }
  const { principal, site } = access;
  const imp = params.importId === "latest" ? await latestImport(principal.orgId, site.id) : await getImport(principal.orgId, params.importId, site.id);
  if (!imp) return params.importId === "latest" ? Response.json({ status: "none" }) : notFound();
  return Response.json(importStatus(imp), { headers: { "Cache-Control": "no-store" } });
}
