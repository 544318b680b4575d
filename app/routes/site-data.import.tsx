import { data, Link, redirect, useNavigation, useRevalidator } from "react-router";
import { useQuery } from "@tanstack/react-query";
import { useEffect } from "react";
import type { Route } from "./+types/site-data.import";
import { requireSite, notFound } from "~/services/session.server";
import { checkStoredFile, getImport, getTemplate, importStatus, inspectImport, latestImport, listTemplates, startImport } from "~/models/imports.server";
import { presignGet } from "~/services/storage.server";
import { can } from "~/permissions";
import { mappingSchema, type Mapping, type WideColumn } from "~/domain/import";
import { EmptyState } from "~/components/empty-state";
import { ImportMapping, type MappingReview } from "~/components/import-mapping";
import { ImportProgress, ImportSummary, type ImportView } from "~/components/import-summary";

export const meta: Route.MetaFunction = () => [{ title: "Import · Data · Sunsift" }];

const REVIEWABLE = ["uploaded", "mapping"];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { principal, site } = await requireSite(request, params.siteId, "data:view");
  const siteView = { id: site.id, name: site.name, timezone: site.timezone };
  const imp = params.importId === "latest" ? await latestImport(principal.orgId, site.id) : await getImport(principal.orgId, params.importId, site.id);
  if (!imp) {
    if (params.importId === "latest") return { site: siteView, imp: null, review: null, sampleError: null, canImport: false };
    notFound("No such import");
  }
  const url = new URL(request.url);
  if (url.searchParams.get("download") === "rejects") {
    if (!imp.rejectReportKey) notFound("This import has no reject report");
    throw redirect(await presignGet(imp.rejectReportKey, `rejects-${imp.fileName.replace(/\.[^.]*$/, "")}.csv`));
  }
  let review: MappingReview | null = null;
  let sampleError: string | null = null;
  const canImport = can(principal.roles, "data:import");
  if (REVIEWABLE.includes(imp.status) && canImport) {
    const templateName = url.searchParams.get("template") || null;
    const template = templateName ? await getTemplate(site.id, templateName) : null;
    const sample = await inspectImport(site, imp, template ?? undefined);
    if (!sample.ok) sampleError = sample.line ? `Line ${sample.line}: ${sample.reason}` : sample.reason;
    else {
      const ins = sample.inspection;
      review = {
        headers: ins.headers,
        mapping: ins.mapping,
        devices: sample.devices,
        delimiter: ins.delimiter,
        decimalSeparator: ins.decimalSeparator,
        interval: ins.interval.ok ? `${ins.interval.seconds / 60} min` : `not detected (${ins.interval.reason})`,
        dateOrder: ins.dateOrder,
        sampleRows: ins.sampleRows.slice(0, 5).map((r) => r.slice(0, 10).map((c) => c.slice(0, 40))),
        templates: (await listTemplates(site.id)).map((t) => t.name),
        template: template ? templateName : null,
        ...(ins.templateFit ? { templateFit: ins.templateFit } : {}),
      };
    }
  }
  return { site: siteView, imp: importStatus(imp) as ImportView, review, sampleError, canImport };
}

/** The reviewed mapping from the form's fields (device.N, metric.N, unit.N per column). */
function mappingFromForm(form: FormData, headers: string[]): { mapping: Mapping } | { errors: string[] } {
  const int = (k: string) => (form.get(k) === null || form.get(k) === "" ? undefined : Number(form.get(k)));
  if (form.get("format") === "long") {
    const m = { format: "long", timestampColumn: int("timestampColumn"), deviceColumn: int("deviceColumn"), metricColumn: int("metricColumn"), valueColumn: int("valueColumn"), columnCount: headers.length };
    const parsed = mappingSchema.safeParse(m);
    return parsed.success ? { mapping: parsed.data as Mapping } : { errors: ["Choose the timestamp, device, measurement and value columns."] };
  }
  const ts = int("timestampColumn") ?? 0;
  const time = int("timeColumn");
  const errors: string[] = [];
  const columns: WideColumn[] = headers.map((header, i) => {
    if (i === ts || i === time) return { header, ignore: true, note: "timestamp" };
    const device = String(form.get(`device.${i}`) ?? "").trim();
    const metric = String(form.get(`metric.${i}`) ?? "");
    const unit = String(form.get(`unit.${i}`) ?? "");
    if (!device) return { header, ignore: true };
    if (!metric || !unit) errors.push(`Column "${header}": choose a measurement and a unit, or clear the device to skip it.`);
    return { header, device, metric, unit } as WideColumn;
  });
  if (errors.length) return { errors };
  const parsed = mappingSchema.safeParse({ format: "wide", timestampColumn: ts, ...(time !== undefined ? { timeColumn: time } : {}), columns });
  return parsed.success ? { mapping: parsed.data as Mapping } : { errors: parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { principal, site } = await requireSite(request, params.siteId, "data:import");
  const imp = await getImport(principal.orgId, params.importId, site.id);
  if (!imp) notFound("No such import");
  const form = await request.formData();
  if (form.get("intent") !== "start") return data({ errors: ["Unknown action"] }, { status: 400 });
  const stored = await checkStoredFile(imp);
  if (!stored.ok) return data({ errors: [stored.error] }, { status: 400 });
  const sample = await inspectImport(site, imp);
  if (!sample.ok) return data({ errors: [sample.line ? `Line ${sample.line}: ${sample.reason}` : sample.reason] }, { status: 400 });
  const built = mappingFromForm(form, sample.inspection.headers);
  if ("errors" in built) return data({ errors: built.errors }, { status: 400 });
  const templateName = String(form.get("templateName") ?? "").trim().slice(0, 80);
  const r = await startImport({ orgId: principal.orgId, userId: principal.userId }, site, imp, built.mapping, templateName ? { templateName } : {});
  if (!r.ok) return data({ errors: r.errors }, { status: 400 });
  throw redirect(`/sites/${site.id}/data/${imp.id}`);
}

const RUNNING = ["queued", "running"];

export default function ImportScreen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, imp, review, sampleError, canImport } = loaderData;
  const navigation = useNavigation();
  const revalidator = useRevalidator();
  const statusUrl = imp ? `/sites/${site.id}/data/${imp.id}/status` : "";
  const { data: live } = useQuery({
    queryKey: ["import", imp?.id],
    queryFn: async (): Promise<ImportView> => {
      const res = await fetch(statusUrl, { headers: { accept: "application/json" } });
      if (!res.ok) throw new Error(`status ${res.status}`);
      return (await res.json()) as ImportView;
    },
    enabled: imp !== null && RUNNING.includes(imp.status),
    initialData: imp ?? undefined,
    staleTime: 0,
    refetchInterval: (q) => (q.state.data && RUNNING.includes(q.state.data.status) ? 1000 : false),
  });
  const current = live ?? imp;
  useEffect(() => {
    // The job finished while the page was open: reload the page's data once (history, links).
    if (imp && current && RUNNING.includes(imp.status) && !RUNNING.includes(current.status)) revalidator.revalidate();
  }, [imp, current, revalidator]);

  return (
    <div className="space-y-4">
      <p className="text-sm"><Link className="text-brand underline" to={`/sites/${site.id}/data`}>← Data</Link></p>
      <h1 className="h1">{current ? current.fileName : "Imports"} <span className="text-muted">· {site.name}</span></h1>
      {!current ? (
        <EmptyState title="No import yet">Upload a production export on the <Link className="text-brand underline" to={`/sites/${site.id}/data`}>Data</Link> screen.</EmptyState>
      ) : RUNNING.includes(current.status) ? (
        <ImportProgress imp={current} />
      ) : current.status === "done" || current.status === "failed" ? (
        <ImportSummary imp={current} zone={site.timezone} reportHref={`/sites/${site.id}/data/${current.id}?download=rejects`} />
      ) : current.status === "uploading" ? (
        <EmptyState title="The upload did not finish">Upload the file again from the Data screen.</EmptyState>
      ) : !canImport ? (
        <EmptyState title="Waiting for a performance engineer">The file arrived; a performance engineer reviews the column mapping and starts the import.</EmptyState>
      ) : sampleError ? (
        <div role="alert" className="rounded-md bg-red-50 p-4 text-bad">
          <p className="font-semibold">This file cannot be imported.</p>
          <p data-testid="sample-error">{sampleError}</p>
        </div>
      ) : review ? (
        <ImportMapping review={review} errors={actionData?.errors ?? []} busy={navigation.state !== "idle"} />
      ) : null}
    </div>
  );
}
