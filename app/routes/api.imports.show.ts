import type { Route } from "./+types/api.imports.show";
import { requireToken } from "~/services/session.server";
import { getImport, importStatus } from "~/models/imports.server";
import { presignGet } from "~/services/storage.server";

/** GET /api/v1/imports/:id — status, progress, counts and the first errors of an import. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const token = await requireToken(request, "read");
  const imp = await getImport(token.orgId, params.id);
  if (!imp) return Response.json({ error: "No such import" }, { status: 404 });
  const rejectReportUrl = imp.rejectReportKey ? await presignGet(imp.rejectReportKey, `rejects-${imp.id}.csv`) : null;
  return Response.json({ ...importStatus(imp), rejectReportUrl });
}
