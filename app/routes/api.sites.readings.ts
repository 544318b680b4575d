import { Readable } from "node:stream";
import type { ReadableStream as WebReadableStream } from "node:stream/web";
import type { Route } from "./+types/api.sites.readings";
import { requireTokenSite } from "~/services/session.server";
import { createApiImport } from "~/models/imports.server";
import { apiJson, apiError, readingsAccepted } from "~/lib/api-schemas";

/**
 * POST /api/v1/sites/:siteId/readings — a production export as text/csv. The body is streamed to
 * object storage (the record of what arrived), then the import job is queued: 202 with its id.
 */
export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "POST") return apiJson(apiError, { error: "Use POST" }, { status: 405 });
  const { token, site } = await requireTokenSite(request, params.siteId, "write");
  const url = new URL(request.url);
  const format = url.searchParams.get("format");
  if (format !== null && format !== "long" && format !== "wide")
    return apiJson(apiError, { error: "format must be long or wide" }, { status: 400 });
  const type = request.headers.get("content-type") ?? "";
  if (!/^(text\/csv|text\/plain|application\/octet-stream)\b/i.test(type))
    return apiJson(apiError, { error: "Send the export as text/csv" }, { status: 415 });
  if (!request.body) return apiJson(apiError, { error: "The body is empty" }, { status: 400 });
  const lengthHeader = request.headers.get("content-length");
  const contentLength = lengthHeader !== null && /^\d+$/.test(lengthHeader) ? Number(lengthHeader) : null;
  const fileName = (url.searchParams.get("filename") ?? "api-upload.csv").slice(0, 200);
  const result = await createApiImport({ orgId: token.orgId, userId: null }, site, Readable.fromWeb(request.body as WebReadableStream<Uint8Array>), {
    format,
    templateName: url.searchParams.get("mapping"),
    contentLength,
    fileName,
  });
  if (!result.ok) return apiJson(apiError, { error: result.error }, { status: result.status });
  const statusUrl = `/api/v1/imports/${result.importId}`;
  return apiJson(readingsAccepted, { importId: result.importId, statusUrl }, { status: 202, headers: { Location: statusUrl } });
}
