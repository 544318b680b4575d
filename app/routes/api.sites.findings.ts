import { z } from "zod";
import type { Route } from "./+types/api.sites.findings";
import { requireTokenSite } from "~/services/session.server";
import { getFlight } from "~/models/flights.server";
import { importFindingsCsv } from "~/models/findings.server";
import { decodeUploadText } from "~/lib/upload-text";
import { apiJson, apiError, findingsResponse, uploadRefused } from "~/lib/api-schemas";

const MAX = 5 * 1024 * 1024;

/** POST /api/v1/sites/:siteId/findings?flightId=… — text/csv; all or nothing; runs the cross-reference. */
export async function action({ request, params }: Route.ActionArgs) {
  const { token, site } = await requireTokenSite(request, params.siteId, "write");
  const flightId = z.uuid().safeParse(new URL(request.url).searchParams.get("flightId"));
  if (!flightId.success) return apiJson(apiError, { error: "Give the flight as ?flightId=<uuid>" }, { status: 400 });
  if (!(await getFlight(site.id, flightId.data))) return apiJson(apiError, { error: "No such flight" }, { status: 404 });
  if (Number(request.headers.get("content-length") ?? 0) > MAX) return apiJson(apiError, { error: "A findings file may be at most 5 MB" }, { status: 413 });
  const bytes = new Uint8Array(await request.arrayBuffer());
  if (bytes.length > MAX) return apiJson(apiError, { error: "A findings file may be at most 5 MB" }, { status: 413 });
  const decoded = decodeUploadText(bytes);
  if (!decoded.ok) return apiJson(apiError, { error: `The findings were not imported: ${decoded.reason} Nothing was changed.` }, { status: 400 });
  const text = decoded.text;
  if (text.length > MAX) return apiJson(apiError, { error: "A findings file may be at most 5 MB" }, { status: 413 });
  const r = await importFindingsCsv({ orgId: token.orgId, userId: null }, site.id, flightId.data, text, { source: "api" });
  if (!r.ok) return apiJson(uploadRefused, { error: "The findings were not imported; nothing changed", errorCount: r.errorCount, errors: r.errors }, { status: 400 });
  return apiJson(findingsResponse, { imported: r.imported, crossReference: r.xref });
}
