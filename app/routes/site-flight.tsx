import { useState } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/site-flight";
import { forbidden, notFound, requireSite } from "~/services/session.server";
import { can } from "~/permissions";
import { flightDay, getFlight, utcToLocal } from "~/models/flights.server";
import { addFinding, confirmImages, crossReferenceView, deleteFinding, flightFindings, imageUrls, importFindingsCsv, presignImages, setImageMark } from "~/models/findings.server";
import { getInspectionSettings, ruleOverrides } from "~/models/inspection.server";
import { ANOMALY_CLASSES, deltaTBand, effectiveRule } from "~/domain/anomaly-classes";
import { cameraPlan, checkConditions } from "~/domain/flight-conditions";
import { EmptyState } from "~/components/empty-state";
import { decodeUploadText } from "~/lib/upload-text";
import { FlightCautions } from "~/components/flight-cautions";
import { FindingViewer, ImageUpload, type ViewerImage } from "~/components/finding-images";

export const meta: Route.MetaFunction = () => [{ title: "Flight · Sunsift" }];

const MAX_CSV = 5 * 1024 * 1024;

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flights:view");
  const got = await getFlight(site.id, params.flightId);
  if (!got) notFound("No such flight");
  const { flight, camera, lens, blocks } = got;
  const [findingRows, xref, rules, insp] = await Promise.all([flightFindings(site.id, flight.id), crossReferenceView(site.id), ruleOverrides(principal.orgId), getInspectionSettings(principal.orgId)]);
  const urls = await imageUrls(site.id, findingRows.flatMap((f) => f.images.filter((i) => i.uploaded).map((i) => i.id)));
  const combiners = new Set(findingRows.map((f) => f.combinerId));
  const t = site.settings.thresholds;
  const plan = camera && lens ? cameraPlan(camera, lens.focalLengthMm, insp.cellSizeM) : null;
  return {
    site: { id: site.id, name: site.name, timezone: site.timezone },
    flight: {
      id: flight.id,
      startedLocal: utcToLocal(flight.startedAt, site.timezone).replace("T", " "),
      endedLocal: flight.endedAt ? utcToLocal(flight.endedAt, site.timezone).slice(11) : null,
      day: flightDay(flight.startedAt, site.timezone),
      blocks: blocks.map((b) => b.name),
      pilotName: flight.pilotName,
      aircraft: flight.aircraft,
      camera: camera ? `${camera.name}${lens ? `, ${lens.focalLengthMm} mm lens` : ""}` : (flight.cameraText ?? "—"),
      cameraText: camera ? flight.cameraText : null,
      altitudeM: flight.altitudeM,
      gsdCm: plan && flight.altitudeM ? plan.gsdCmAt(flight.altitudeM) : null,
      cellLevelMaxM: plan?.cellLevelMaxAltitudeM ?? null,
      dataArchived: flight.dataArchived,
      archiveLocation: flight.archiveLocation,
      notes: flight.notes,
      conditions: { poaWm2: flight.poaWm2, windKmh: flight.windKmh, cloudOkta: flight.cloudOkta, ambientC: flight.ambientC },
      checks: checkConditions({ poaWm2: flight.poaWm2, windKmh: flight.windKmh, cloudOkta: flight.cloudOkta, ambientC: flight.ambientC }, t),
    },
    findings: findingRows.map((f) => ({
      ...f,
      severity: effectiveRule(f.classKey, rules).severity,
      band: deltaTBand(f.deltaTK),
      images: f.images.map((i) => ({ ...i, full: urls[i.id]?.full ?? null, thumb: urls[i.id]?.thumb ?? null })),
    })),
    xref: xref.flags.filter((x) => combiners.has(x.combinerId)),
    threshold: xref.threshold,
    classes: ANOMALY_CLASSES.map((c) => ({ key: c.key, name: c.name })),
    canEdit: can(principal.roles, "flights:log"),
    canOrder: can(principal.roles, "workorders:manage"),
  };
}

type ActionResult =
  | { intent: "import"; ok: boolean; message: string; errors?: { line: number; reason: string }[] }
  | { intent: "add"; ok: boolean; message: string }
  | { presign?: unknown; error?: string }
  | { confirmed?: number; missing?: number }
  | { ok: boolean };

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flights:log");
  if (!can(principal.roles, "flights:log")) forbidden();
  const got = await getFlight(site.id, params.flightId);
  if (!got) notFound("No such flight");
  const flightId = got.flight.id;
  const actor = { orgId: principal.orgId, userId: principal.userId };
  const form = await request.formData();
  const intent = form.get("intent");
  const s = (k: string) => (typeof form.get(k) === "string" ? String(form.get(k)) : "");
  if (intent === "import") {
    const file = form.get("file");
    if (!(file instanceof File) || file.size === 0) return data<ActionResult>({ intent: "import", ok: false, message: "Choose a findings CSV file first." }, { status: 400 });
    if (file.size > MAX_CSV) return data<ActionResult>({ intent: "import", ok: false, message: "A findings file may be at most 5 MB." }, { status: 400 });
    const decoded = decodeUploadText(new Uint8Array(await file.arrayBuffer()));
    if (!decoded.ok) return data<ActionResult>({ intent: "import", ok: false, message: `The findings were not imported: ${decoded.reason} Nothing was changed.` }, { status: 400 });
    const r = await importFindingsCsv(actor, site.id, flightId, decoded.text);
    if (!r.ok)
      return data<ActionResult>({ intent: "import", ok: false, message: `The findings were not imported: ${r.errorCount} problem${r.errorCount === 1 ? "" : "s"} found. Nothing was changed.`, errors: r.errors }, { status: 400 });
    return data<ActionResult>({
      intent: "import",
      ok: true,
      message: `${r.imported} finding${r.imported === 1 ? "" : "s"} imported. Cross-reference: ${r.xref!.explained} flag${r.xref!.explained === 1 ? "" : "s"} explained, ${r.xref!.needsFlight} need${r.xref!.needsFlight === 1 ? "s" : ""} a flight.`,
    });
  }
  if (intent === "add") {
    const r = await addFinding(actor, site.id, flightId, { string: s("string"), x: s("x"), y: s("y"), className: s("class"), deltaTK: s("deltaTK"), notes: s("notes") });
    if (!r.ok) return data<ActionResult>({ intent: "add", ok: false, message: r.error }, { status: 400 });
    return data<ActionResult>({ intent: "add", ok: true, message: "Finding saved." });
  }
  if (intent === "delete") {
    const id = z.uuid().safeParse(s("findingId"));
    if (!id.success || !(await deleteFinding(actor, site.id, id.data))) return data<ActionResult>({ ok: false }, { status: 404 });
    return data<ActionResult>({ ok: true });
  }
  if (intent === "presign") {
    let listed: unknown;
    try {
      listed = JSON.parse(s("files") || "[]");
    } catch {
      return data<ActionResult>({ error: "Could not read the chosen files" }, { status: 400 });
    }
    const files = z.array(z.object({ name: z.string().min(1).max(200), size: z.number(), type: z.string().max(100) })).max(500).safeParse(listed);
    if (!files.success) return data<ActionResult>({ error: "Could not read the chosen files" }, { status: 400 });
    const findingId = s("findingId");
    if (findingId && !z.uuid().safeParse(findingId).success) return data<ActionResult>({ error: "No such finding" }, { status: 404 });
    return data<ActionResult>({ presign: await presignImages(site.id, flightId, files.data, findingId ? { findingId } : {}) });
  }
  if (intent === "confirm-images") {
    const ids = s("ids").split(",").filter(Boolean).map(Number).filter(Number.isInteger);
    return data<ActionResult>(await confirmImages(site.id, flightId, ids));
  }
  if (intent === "mark") {
    const ok = await setImageMark(site.id, Number(s("imageId")), Number(s("x")), Number(s("y")));
    return data<ActionResult>({ ok }, { status: ok ? 200 : 404 });
  }
  return data<ActionResult>({ ok: false }, { status: 400 });
}

const SEVERITY_CLASS: Record<string, string> = { high: "bg-red-100 text-bad", medium: "bg-amber-100 text-warn", low: "bg-slate-100 text-muted" };

export default function FlightScreen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, flight, findings, xref, threshold, classes, canEdit, canOrder } = loaderData;
  const nav = useNavigation();
  const busy = nav.state !== "idle";
  const [viewer, setViewer] = useState<{ title: string; caption: string; image: ViewerImage } | null>(null);
  const [page, setPage] = useState(1);
  const a = actionData as { intent?: string; ok?: boolean; message?: string; errors?: { line: number; reason: string }[] } | undefined;
  const pageSize = 25;
  const pages = Math.max(1, Math.ceil(findings.length / pageSize));
  const shown = findings.slice((page - 1) * pageSize, page * pageSize);
  const pending = findings.reduce((n, f) => n + f.images.filter((i) => !i.uploaded).length, 0);
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-center gap-3">
        <h1 className="h1">Flight {flight.startedLocal}{flight.endedLocal ? `–${flight.endedLocal}` : ""} <span className="text-muted">· {site.name}</span></h1>
        <Link className="btn-secondary ml-auto" to={`/sites/${site.id}/flights`}>All flights</Link>
      </div>

      <section className="panel grid gap-4 md:grid-cols-2" aria-label="Flight log">
        <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1">
          <dt className="text-muted">Blocks</dt><dd data-testid="flight-blocks">{flight.blocks.join(", ")}</dd>
          <dt className="text-muted">Pilot</dt><dd>{flight.pilotName}</dd>
          <dt className="text-muted">Aircraft</dt><dd>{flight.aircraft}</dd>
          <dt className="text-muted">Camera</dt><dd>{flight.camera}</dd>
          <dt className="text-muted">Altitude</dt>
          <dd>
            {flight.altitudeM != null ? `${flight.altitudeM} m` : "—"}
            {flight.gsdCm != null ? ` · ${flight.gsdCm.toFixed(2)} cm per pixel` : ""}
            {flight.cellLevelMaxM != null && flight.altitudeM != null && flight.altitudeM > flight.cellLevelMaxM ? <span className="text-warn"> · above {flight.cellLevelMaxM.toFixed(1)} m: too high for cell-level defects</span> : null}
          </dd>
          <dt className="text-muted">Raw data</dt><dd>{flight.dataArchived ? `archived: ${flight.archiveLocation}` : <span className="text-warn">not archived</span>}</dd>
          {flight.notes ? (<><dt className="text-muted">Notes</dt><dd>{flight.notes}</dd></>) : null}
        </dl>
        <div>
          <p className="font-semibold">Conditions at take-off</p>
          <p className="text-muted">
            POA {flight.conditions.poaWm2 ?? "—"} W/m² · wind {flight.conditions.windKmh ?? "—"} km/h · cloud {flight.conditions.cloudOkta ?? "—"} okta · ambient {flight.conditions.ambientC ?? "—"} °C
          </p>
          <ul className="mt-2 space-y-1" data-testid="flight-checks">
            {flight.checks.map((c) => <li key={c.key} className={c.ok === false ? "font-semibold text-bad" : c.ok ? "text-ok" : "text-muted"}>{c.ok === false ? "⚠ " : c.ok ? "✓ " : "• "}{c.message}</li>)}
          </ul>
        </div>
      </section>

      {canEdit ? (
        <section className="panel space-y-4" aria-labelledby="import-findings">
          <h2 className="h2" id="import-findings">Findings</h2>
          <div className="grid gap-6 lg:grid-cols-2">
            <Form method="post" encType="multipart/form-data" className="space-y-2">
              <input type="hidden" name="intent" value="import" />
              <label className="label" htmlFor="findings-file">Import a findings CSV</label>
              <input id="findings-file" name="file" type="file" accept=".csv,text/csv" className="input" required />
              <p className="text-xs text-muted">
                Columns <code>string,class,delta_t_k,image,notes</code>; <code>string</code> as <code>B1-I2-C04/7</code>, or columns <code>x,y</code> in metres (nearest string within 5 m).
                All or nothing: a file with any bad line changes nothing.
              </p>
              <button className="btn" type="submit" disabled={busy}>{busy && nav.formData?.get("intent") === "import" ? "Importing…" : "Import findings"}</button>
            </Form>
            <Form method="post" className="space-y-2">
              <input type="hidden" name="intent" value="add" />
              <p className="label">Add one finding by hand</p>
              <div className="grid grid-cols-2 gap-2">
                <input className="input col-span-2" name="string" aria-label="String (combiner/number)" placeholder="String, e.g. B1-I2-C04/7" />
                <input className="input" name="x" aria-label="x (m)" placeholder="or x (m)" inputMode="decimal" />
                <input className="input" name="y" aria-label="y (m)" placeholder="y (m)" inputMode="decimal" />
                <select className="input" name="class" aria-label="Class" defaultValue="string offline">
                  {classes.map((c) => <option key={c.key} value={c.name}>{c.name}</option>)}
                </select>
                <input className="input" name="deltaTK" aria-label="ΔT (K)" placeholder="ΔT (K)" inputMode="decimal" />
                <input className="input col-span-2" name="notes" aria-label="Notes" placeholder="Notes" />
              </div>
              <button className="btn-secondary" type="submit" disabled={busy}>Add finding</button>
            </Form>
          </div>
          {a?.message ? (
            <div role={a.ok ? "status" : "alert"} className={`rounded-md p-3 ${a.ok ? "bg-green-50 text-ok" : "bg-red-50 text-bad"}`} data-testid="findings-result">
              <p className="font-semibold">{a.message}</p>
              {a.errors?.length ? <ul className="mt-2 max-h-64 list-disc overflow-auto pl-5 text-sm">{a.errors.map((e, i) => <li key={i}>Line {e.line}: {e.reason}</li>)}</ul> : null}
            </div>
          ) : null}
          <ImageUpload hint={pending ? `${pending} picture${pending === 1 ? "" : "s"} named in the findings still to upload: choose them all at once, they are matched by file name.` : "Pictures are matched to findings by the file name in the CSV's image column."} />
        </section>
      ) : null}

      {xref.length ? (
        <section className="panel space-y-3" aria-labelledby="xref">
          <h2 className="h2" id="xref">Flags these findings speak to</h2>
          <ul className="space-y-3">
            {xref.map((x) => (
              <li key={x.flagId} className="rounded-md border border-line p-3" data-testid="xref-flag">
                <p className="text-lg">
                  <strong>{x.combiner}</strong> · {x.stringsOut} of {x.stringCount ?? "?"} strings out · {x.lostKwhPerDay.toFixed(1)} kWh/day ·{" "}
                  <span className={x.explainedFraction >= threshold ? "font-semibold text-ok" : "font-semibold text-warn"}>{Math.round(x.explainedFraction * 100)} % explained → {x.state}</span>
                </p>
                <p>{x.combiner} → {x.stringsToCheck.length ? `string${x.stringsToCheck.length === 1 ? "" : "s"} ${x.stringsToCheck.join(", ")}` : "no string named yet"}</p>
                <p className="text-muted">{x.advice}</p>
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      {findings.length === 0 ? (
        <EmptyState title="No findings for this flight">Import the findings CSV the thermography software exported, or add findings one by one.</EmptyState>
      ) : (
        <section className="panel overflow-x-auto">
          <table className="table" data-testid="findings-table">
            <thead><tr><th>String</th><th>Class</th><th>Severity</th><th>ΔT</th><th>Notes</th><th>Images</th>{canOrder ? <th>Field work</th> : null}{canEdit ? <th><span className="sr-only">Actions</span></th> : null}</tr></thead>
            <tbody>
              {shown.map((f) => (
                <tr key={f.id}>
                  <td className="whitespace-nowrap font-medium">{f.combiner}/{f.stringNumber}</td>
                  <td>{f.className}</td>
                  <td><span className={`rounded px-2 py-0.5 text-xs font-semibold ${SEVERITY_CLASS[f.severity]}`}>{f.severity}</span></td>
                  <td className="whitespace-nowrap">{f.deltaTK != null ? `${f.deltaTK} K` : "—"}{f.band ? <span className="block text-xs text-muted">{f.band}</span> : null}</td>
                  <td className="max-w-md">{f.notes}</td>
                  <td>
                    <div className="flex flex-wrap gap-2">
                      {f.images.map((i) =>
                        i.full ? (
                          <button
                            key={i.id}
                            type="button"
                            className="rounded border border-line"
                            onClick={() => setViewer({ title: `${f.className} on ${f.combiner}/${f.stringNumber}`, caption: `${f.deltaTK != null ? `ΔT ${f.deltaTK} K · ` : ""}${f.notes ?? ""}`, image: { id: i.id, kind: i.kind, fileName: i.fileName, full: i.full!, markX: i.markX, markY: i.markY } })}
                            aria-label={`Open ${i.fileName}`}
                          >
                            <img src={i.thumb!} alt="" width={80} height={64} className="h-16 w-20 object-cover" loading="lazy" />
                          </button>
                        ) : (
                          <span key={i.id} className="text-xs text-muted" title="Named in the CSV, not uploaded yet">{i.fileName} (to upload)</span>
                        ),
                      )}
                    </div>
                  </td>
                  {canOrder ? (
                    <td>
                      <Link className="whitespace-nowrap text-brand underline" to={`/sites/${site.id}/work-orders/new?findingId=${f.id}`} aria-label={`Create a work order for ${f.combiner}/${f.stringNumber}`}>Create work order</Link>
                    </td>
                  ) : null}
                  {canEdit ? (
                    <td>
                      <Form method="post" onSubmit={(e) => { if (!confirm(`Delete the finding on ${f.combiner}/${f.stringNumber}?`)) e.preventDefault(); }}>
                        <input type="hidden" name="intent" value="delete" />
                        <input type="hidden" name="findingId" value={f.id} />
                        <button type="submit" className="text-sm text-bad underline">Delete</button>
                      </Form>
                    </td>
                  ) : null}
                </tr>
              ))}
            </tbody>
          </table>
          {pages > 1 ? (
            <nav className="mt-3 flex items-center gap-2" aria-label="Pages">
              <button className="btn-secondary" type="button" disabled={page <= 1} onClick={() => setPage(page - 1)}>Previous</button>
              <span className="text-sm text-muted">Page {page} of {pages}</span>
              <button className="btn-secondary" type="button" disabled={page >= pages} onClick={() => setPage(page + 1)}>Next</button>
            </nav>
          ) : null}
        </section>
      )}
      <FlightCautions />
      {viewer ? <FindingViewer {...viewer} canMark={canEdit} onClose={() => setViewer(null)} /> : null}
    </div>
  );
}
