import type { Route } from "./+types/api.imports.show";
import { requireToken } from "~/services/session.server";
import { getImport, importStatus } from "~/models/imports.server";
import { presignGet } from "~/services/storage.server";
import { apiJson, apiError, importResponse } from "~/lib/api-schemas";

/** GET /api/v1/imports/:id — status, progress, counts and the first errors of an import. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const token = await requireToken(request, "read");
  const imp = await getImport(token.orgId, params.id);
  if (!imp) return apiJson(apiError, { error: "No such import" }, { status: 404 });
  const rejectReportUrl = imp.rejectReportKey ? await presignGet(imp.rejectReportKey, `rejects-${imp.id}.csv`) : null;
  return apiJson(importResponse, { ...importStatus(imp), rejectReportUrl });
}
