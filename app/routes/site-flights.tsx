import { useMemo, useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/site-flights";
import { forbidden, requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";
import { can } from "~/permissions";
import { createFlight, flightInputSchema, listFlights, siteBlocks, utcToLocal } from "~/models/flights.server";
import { getInspectionSettings, listCameras } from "~/models/inspection.server";
import { cameraPlan, checkConditions } from "~/domain/flight-conditions";
import { FlightCautions } from "~/components/flight-cautions";

export const meta: Route.MetaFunction = () => [{ title: "Flights · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flights:view");
  const page = Math.max(1, Number(new URL(request.url).searchParams.get("page")) || 1);
  const [flightsPage, blockRows, cameras, insp] = await Promise.all([listFlights(site.id, page), siteBlocks(site.id), listCameras(principal.orgId), getInspectionSettings(principal.orgId)]);
  const names = new Map(blockRows.map((b) => [b.id, b.name]));
  const t = site.settings.thresholds;
  return {
    site: { id: site.id, name: site.name, timezone: site.timezone },
    thresholds: { irMinPoa: t.irMinPoa, irMaxWindKmh: t.irMaxWindKmh, irMaxCloudOkta: t.irMaxCloudOkta },
    flights: {
      ...flightsPage,
      items: flightsPage.items.map((f) => ({ ...f, startedLocal: utcToLocal(f.startedAt, site.timezone).replace("T", " "), blocks: f.blockIds.map((b) => names.get(b) ?? "?").sort() })),
    },
    blocks: blockRows,
    cameras: cameras.map((c) => ({ id: c.id, name: c.name, widthPx: c.widthPx, heightPx: c.heightPx, pixelPitchUm: c.pixelPitchUm, lenses: c.lenses.map((l) => ({ id: l.id, focalLengthMm: l.focalLengthMm })) })),
    cellSizeM: insp.cellSizeM,
    canLog: can(principal.roles, "flights:log"),
    isAdmin: can(principal.roles, "settings:users"),
    me: principal.name,
    nowLocal: utcToLocal(new Date(), site.timezone),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flights:log");
  if (!can(principal.roles, "flights:log")) forbidden();
  const form = await request.formData();
  const str = (k: string) => {
    const v = form.get(k);
    return typeof v === "string" ? v : undefined;
  };
  const [cameraId, lensId] = (str("camera") ?? "").split(":");
  const parsed = flightInputSchema.safeParse({
    startedLocal: str("startedLocal"),
    durationMin: str("durationMin"),
    blockIds: form.getAll("blockIds").map(String),
    pilotName: str("pilotName"),
    aircraft: str("aircraft"),
    cameraId: cameraId || "",
    lensId: lensId || "",
    cameraText: str("cameraText"),
    altitudeM: str("altitudeM"),
    poaWm2: str("poaWm2"),
    windKmh: str("windKmh"),
    cloudOkta: str("cloudOkta"),
    ambientC: str("ambientC"),
    dataArchived: str("dataArchived"),
    archiveLocation: str("archiveLocation"),
    notes: str("notes"),
  });
  if (!parsed.success) {
    const errors: Record<string, string> = {};
    for (const i of parsed.error.issues) errors[String(i.path[0] ?? "form")] ??= i.message;
    return data({ errors }, { status: 400 });
  }
  const r = await createFlight({ orgId: principal.orgId, userId: principal.userId }, site, parsed.data);
  if (!r.ok) return data({ errors: r.errors }, { status: 400 });
  return redirect(`/sites/${site.id}/flights/${r.flight.id}`);
}

function Field({ label, name, error, children, hint }: { label: string; name: string; error?: string; children: React.ReactNode; hint?: string }) {
  return (
    <div>
      <label className="label" htmlFor={name}>{label}</label>
      {children}
      {hint ? <p className="mt-1 text-xs text-muted">{hint}</p> : null}
      {error ? <p className="field-error" id={`${name}-error`}>{error}</p> : null}
    </div>
  );
}

export default function Flights({ loaderData, actionData }: Route.ComponentProps) {
  const { site, flights, blocks, cameras, thresholds, canLog, isAdmin, me, nowLocal, cellSizeM } = loaderData;
  const errors: Record<string, string> = (actionData as { errors?: Record<string, string> } | undefined)?.errors ?? {};
  const nav = useNavigation();
  const [open, setOpen] = useState(Object.keys(errors).length > 0 || flights.total === 0);
  const [cond, setCond] = useState({ poa: "", wind: "", cloud: "", ambient: "" });
  const [cam, setCam] = useState("");
  const [alt, setAlt] = useState("25");
  const num = (s: string) => (s.trim() === "" || !Number.isFinite(Number(s)) ? null : Number(s));
  const checks = checkConditions({ poaWm2: num(cond.poa), windKmh: num(cond.wind), cloudOkta: num(cond.cloud), ambientC: num(cond.ambient) }, thresholds);
  const plan = useMemo(() => {
    const [cid, lid] = cam.split(":");
    const c = cameras.find((x) => x.id === cid);
    const l = c?.lenses.find((x) => String(x.id) === lid);
    return c && l ? { c, l, p: cameraPlan(c, l.focalLengthMm, cellSizeM) } : null;
  }, [cam, cameras, cellSizeM]);
  const pages = Math.max(1, Math.ceil(flights.total / flights.pageSize));
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-center gap-3">
        <h1 className="h1">Flights <span className="text-muted">· {site.name}</span></h1>
        <div className="ml-auto flex gap-2">
          <Link className="btn-secondary" to={`/sites/${site.id}/fly-list`}>Fly list</Link>
          {isAdmin ? <Link className="btn-secondary" to="/settings/inspection">Cameras and anomaly rules</Link> : null}
          {canLog ? <button className="btn" type="button" onClick={() => setOpen((o) => !o)} aria-expanded={open}>{open ? "Close the log form" : "Log a flight"}</button> : null}
        </div>
      </div>

      {canLog && open ? (
        <section className="panel space-y-4" aria-labelledby="log-flight">
          <h2 className="h2" id="log-flight">Log a flight</h2>
          <Form method="post" className="space-y-4" noValidate>
            <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
              <Field label={`Take-off (site time, ${site.timezone})`} name="startedLocal" error={errors.startedLocal}>
                <input className="input" id="startedLocal" name="startedLocal" type="datetime-local" defaultValue={nowLocal} required />
              </Field>
              <Field label="Duration (min)" name="durationMin" error={errors.durationMin}>
                <input className="input" id="durationMin" name="durationMin" inputMode="numeric" placeholder="80" />
              </Field>
              <Field label="Pilot" name="pilotName" error={errors.pilotName}>
                <input className="input" id="pilotName" name="pilotName" defaultValue={me} required />
              </Field>
              <Field label="Aircraft" name="aircraft" error={errors.aircraft}>
                <input className="input" id="aircraft" name="aircraft" placeholder="quadcopter, 4 batteries" required />
              </Field>
            </div>
            <fieldset>
              <legend className="label">Blocks covered</legend>
              {blocks.length ? (
                <div className="flex flex-wrap gap-3">
                  {blocks.map((b) => (
                    <label key={b.id} className="flex items-center gap-2 rounded-md border border-line px-3 py-2">
                      <input type="checkbox" name="blockIds" value={b.id} /> {b.name}
                    </label>
                  ))}
                </div>
              ) : <p className="text-muted">The site has no layout yet: an engineer imports it first.</p>}
              {errors.blockIds ? <p className="field-error">{errors.blockIds}</p> : null}
            </fieldset>
            <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
              <Field label="Camera and lens" name="camera" error={errors.cameraId ?? errors.lensId}>
                <select className="input" id="camera" name="camera" value={cam} onChange={(e) => setCam(e.target.value)}>
                  <option value="">— not a saved profile —</option>
                  {cameras.flatMap((c) => c.lenses.map((l) => <option key={`${c.id}:${l.id}`} value={`${c.id}:${l.id}`}>{c.name}, {l.focalLengthMm} mm</option>))}
                </select>
              </Field>
              <Field label="Camera (free text)" name="cameraText" hint="When the camera is not a saved profile.">
                <input className="input" id="cameraText" name="cameraText" placeholder="640×512 radiometric, 13 mm" />
              </Field>
              <Field label="Altitude above the modules (m)" name="altitudeM" error={errors.altitudeM}>
                <input className="input" id="altitudeM" name="altitudeM" inputMode="decimal" value={alt} onChange={(e) => setAlt(e.target.value)} />
              </Field>
              <div className="rounded-md bg-paper p-3 text-sm" data-testid="camera-plan">
                {plan ? (
                  <>
                    <p><strong>{plan.p.gsdCmAt(num(alt) ?? 0).toFixed(2)} cm</strong> per pixel at {alt || 0} m</p>
                    <p>Cell-level (≥ 5×5 px per {Math.round(cellSizeM * 1000)} mm cell): at most <strong>{plan.p.cellLevelMaxAltitudeM.toFixed(1)} m</strong></p>
                    <p>String-level scan (≥ 2 px per cell): at most <strong>{plan.p.stringLevelMaxAltitudeM.toFixed(1)} m</strong></p>
                    {num(alt) != null && num(alt)! > plan.p.cellLevelMaxAltitudeM ? <p className="text-warn">Too high for cell-level defects.</p> : null}
                  </>
                ) : <p className="text-muted">Choose a saved camera to see the ground sample distance and the highest useful altitude.</p>}
              </div>
            </div>
            <fieldset className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
              <legend className="label">Measured conditions at take-off</legend>
              <Field label="POA irradiance (W/m²)" name="poaWm2" error={errors.poaWm2}>
                <input className="input" id="poaWm2" name="poaWm2" inputMode="decimal" value={cond.poa} onChange={(e) => setCond({ ...cond, poa: e.target.value })} />
              </Field>
              <Field label="Wind (km/h)" name="windKmh" error={errors.windKmh}>
                <input className="input" id="windKmh" name="windKmh" inputMode="decimal" value={cond.wind} onChange={(e) => setCond({ ...cond, wind: e.target.value })} />
              </Field>
              <Field label="Cloud (okta, 0–8)" name="cloudOkta" error={errors.cloudOkta}>
                <input className="input" id="cloudOkta" name="cloudOkta" inputMode="numeric" value={cond.cloud} onChange={(e) => setCond({ ...cond, cloud: e.target.value })} />
              </Field>
              <Field label="Ambient temperature (°C)" name="ambientC" error={errors.ambientC}>
                <input className="input" id="ambientC" name="ambientC" inputMode="decimal" value={cond.ambient} onChange={(e) => setCond({ ...cond, ambient: e.target.value })} />
              </Field>
            </fieldset>
            <ul className="space-y-1" aria-live="polite" data-testid="condition-checks">
              {checks.map((c) => (
                <li key={c.key} className={c.ok === false ? "font-semibold text-bad" : c.ok ? "text-ok" : "text-muted"}>
                  {c.ok === false ? "⚠ " : c.ok ? "✓ " : "• "}{c.message}
                </li>
              ))}
            </ul>
            <div className="grid gap-4 sm:grid-cols-2">
              <div>
                <label className="flex items-center gap-2 font-medium"><input type="checkbox" name="dataArchived" /> Raw data archived</label>
                <label className="label mt-2" htmlFor="archiveLocation">Where</label>
                <input className="input" id="archiveLocation" name="archiveLocation" placeholder="NAS /ir/2026-10-21" />
                {errors.archiveLocation ? <p className="field-error">{errors.archiveLocation}</p> : null}
              </div>
              <Field label="Notes" name="notes">
                <textarea className="input" id="notes" name="notes" rows={3} />
              </Field>
            </div>
            <button className="btn" type="submit" disabled={nav.state !== "idle"}>{nav.state === "submitting" ? "Saving…" : "Save the flight"}</button>
          </Form>
        </section>
      ) : null}

      {flights.total === 0 ? (
        <EmptyState title="No flights logged">Pilots log infrared flights here, then import their findings and images.</EmptyState>
      ) : (
        <section className="panel overflow-x-auto">
          <table className="table" data-testid="flights-table">
            <thead><tr><th>Take-off</th><th>Blocks</th><th>Pilot</th><th>Conditions</th><th>Findings</th><th>Raw data</th></tr></thead>
            <tbody>
              {flights.items.map((f) => {
                const warn = checkConditions({ poaWm2: f.poaWm2, windKmh: f.windKmh, cloudOkta: f.cloudOkta, ambientC: null }, thresholds).filter((c) => c.ok === false);
                return (
                  <tr key={f.id}>
                    <td><Link className="font-medium text-brand underline" to={`/sites/${site.id}/flights/${f.id}`}>{f.startedLocal}</Link></td>
                    <td>{f.blocks.join(", ")}</td>
                    <td>{f.pilotName}</td>
                    <td>{warn.length ? <span className="text-bad">{warn.map((w) => w.message).join("; ")}</span> : <span className="text-ok">within limits</span>}</td>
                    <td>{f.findings}</td>
                    <td>{f.dataArchived ? "archived" : <span className="text-warn">not archived</span>}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
          {pages > 1 ? (
            <nav className="mt-3 flex gap-2" aria-label="Pages">
              {flights.page > 1 ? <Link className="btn-secondary" to={`?page=${flights.page - 1}`}>Previous</Link> : null}
              <span className="self-center text-sm text-muted">Page {flights.page} of {pages}</span>
              {flights.page < pages ? <Link className="btn-secondary" to={`?page=${flights.page + 1}`}>Next</Link> : null}
            </nav>
          ) : null}
        </section>
      )}
      <FlightCautions />
    </div>
  );
}
