import type { Route } from "./+types/api.sites.layout";
import { requireTokenSite } from "~/services/session.server";
import { CONFIRM_DROP, importLayout } from "~/models/layout.server";
import { decodeUploadText } from "~/lib/upload-text";
import { apiJson, apiError, layoutDropRefused, layoutResponse, uploadRefused } from "~/lib/api-schemas";

const MAX = 20 * 1024 * 1024;

/**
 * POST /api/v1/sites/:siteId/layout — text/csv; all or nothing. A layout that removes strings with
 * drone findings (deleted with them) or open work orders answers 409 unless `?confirm=drop-findings`.
 */
export async function action({ request, params }: Route.ActionArgs) {
  const { token, site } = await requireTokenSite(request, params.siteId, "write");
  const len = Number(request.headers.get("content-length") ?? 0);
  if (len > MAX) return apiJson(apiError, { error: "A layout may be at most 20 MB" }, { status: 413 });
  const bytes = new Uint8Array(await request.arrayBuffer());
  if (bytes.length > MAX) return apiJson(apiError, { error: "A layout may be at most 20 MB" }, { status: 413 });
  const decoded = decodeUploadText(bytes);
  if (!decoded.ok) return apiJson(apiError, { error: `The layout was not imported: ${decoded.reason} Nothing was changed.` }, { status: 400 });
  const text = decoded.text;
  if (text.length > MAX) return apiJson(apiError, { error: "A layout may be at most 20 MB" }, { status: 413 });
  const confirmDropFindings = new URL(request.url).searchParams.get("confirm") === CONFIRM_DROP;
  const result = await importLayout({ orgId: token.orgId, userId: null }, site.id, text, { dryRun: false, confirmDropFindings });
  if (!result.ok && result.drops)
    return apiJson(
      layoutDropRefused,
      { error: `The layout was not imported; nothing changed. ${result.drops.message} To go ahead, send it again with ?confirm=${CONFIRM_DROP}.`, findings: result.drops.findings, workOrders: result.drops.workOrders },
      { status: 409 },
    );
  if (!result.ok) return apiJson(uploadRefused, { error: "The layout was not imported; nothing changed", errorCount: result.errorCount, errors: result.errors }, { status: 400 });
  return apiJson(layoutResponse, { ...result.totals!, warnings: result.warnings });
}
