import { data, Link } from "react-router";
import type { Route } from "./+types/site-data";
import { requireSite } from "~/services/session.server";
import { createUpload, formatBytes, hasLayout, HISTORY_PAGE, listImports, markUploaded, maxUploadBytes } from "~/models/imports.server";
import { can } from "~/permissions";
import { EmptyState } from "~/components/empty-state";
import { UploadPanel } from "~/components/upload-panel";
import { STATUS_LABEL } from "~/components/import-summary";

export const meta: Route.MetaFunction = () => [{ title: "Data · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { principal, site } = await requireSite(request, params.siteId, "data:view");
  const page = Math.max(1, Number(new URL(request.url).searchParams.get("page")) || 1);
  const history = await listImports(principal.orgId, site.id, page);
  return {
    site: { id: site.id, name: site.name, timezone: site.timezone },
    canImport: can(principal.roles, "data:import"),
    hasLayout: await hasLayout(site.id),
    maxBytes: maxUploadBytes(),
    page,
    pages: Math.max(1, Math.ceil(history.total / HISTORY_PAGE)),
    history: history.rows.map((r) => ({ ...r, size: r.sizeBytes === null ? "" : formatBytes(r.sizeBytes), createdAt: r.createdAt.toISOString() })),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { principal, site } = await requireSite(request, params.siteId, "data:import");
  const form = await request.formData();
  const intent = form.get("intent");
  const actor = { orgId: principal.orgId, userId: principal.userId };
  if (intent === "sign") {
    const fileName = String(form.get("fileName") ?? "").trim() || "upload.csv";
    const size = Number(form.get("size"));
    if (!(await hasLayout(site.id))) return data({ ok: false as const, error: "Import the plant layout first." }, { status: 400 });
    const r = await createUpload(actor, site, { name: fileName, size });
    return data(r, { status: r.ok ? 200 : 400 });
  }
  if (intent === "uploaded") {
    const r = await markUploaded(actor, site, String(form.get("importId") ?? ""));
    return data(r, { status: r.ok ? 200 : 400 });
  }
  return data({ ok: false as const, error: "Unknown action" }, { status: 400 });
}

export default function DataScreen({ loaderData }: Route.ComponentProps) {
  const { site, canImport, history, page, pages } = loaderData;
  const dateFmt = new Intl.DateTimeFormat("en-GB", { timeZone: site.timezone, dateStyle: "medium", timeStyle: "short" });
  return (
    <div className="space-y-6">
      <h1 className="h1">Data <span className="text-muted">· {site.name}</span></h1>
      {!loaderData.hasLayout ? (
        <EmptyState title="No plant layout yet">
          Production exports are matched to the plant's combiners and inverters, so the layout comes first.{" "}
          <Link className="font-medium text-brand underline" to={`/sites/${site.id}/layout`}>Import the layout</Link>, then come back here.
        </EmptyState>
      ) : canImport ? (
        <UploadPanel siteId={site.id} maxBytes={loaderData.maxBytes} />
      ) : null}

      <section className="space-y-2" aria-labelledby="history-title">
        <h2 id="history-title" className="h2">Import history</h2>
        {history.length === 0 ? (
          <EmptyState title="No production data yet">Uploaded exports appear here with what they loaded and what was rejected.</EmptyState>
        ) : (
          <div className="panel overflow-x-auto p-0">
            <table className="table" data-testid="import-history">
              <thead>
                <tr><th>Uploaded</th><th>File</th><th>Size</th><th>Status</th><th className="text-right">Rows accepted</th><th className="text-right">Rows rejected</th><th className="text-right">Readings</th></tr>
              </thead>
              <tbody>
                {history.map((h) => (
                  <tr key={h.id}>
                    <td className="whitespace-nowrap">{dateFmt.format(new Date(h.createdAt))}</td>
                    <td><Link className="font-medium text-brand underline" to={`/sites/${site.id}/data/${h.id}`}>{h.fileName}</Link></td>
                    <td className="whitespace-nowrap">{h.size}</td>
                    <td>
                      <span className={h.status === "failed" ? "text-bad" : h.status === "done" ? "text-ok" : "text-warn"} title={h.error ?? undefined}>{STATUS_LABEL[h.status]}</span>
                    </td>
                    <td className="text-right">{h.rowsAccepted.toLocaleString("en")}</td>
                    <td className="text-right">{h.rowsRejected.toLocaleString("en")}</td>
                    <td className="text-right">{h.readingsLoaded.toLocaleString("en")}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        {pages > 1 ? (
          <nav className="flex items-center gap-3 text-sm" aria-label="History pages">
            {page > 1 ? <Link className="btn-secondary" to={`?page=${page - 1}`}>Newer</Link> : null}
            <span className="text-muted">Page {page} of {pages}</span>
            {page < pages ? <Link className="btn-secondary" to={`?page=${page + 1}`}>Older</Link> : null}
          </nav>
        ) : null}
      </section>
    </div>
  );
}
