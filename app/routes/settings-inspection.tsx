import { data, Form } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/settings-inspection";
import { requirePermission } from "~/services/session.server";
import { SettingsTabs } from "~/components/settings-tabs";
import {
  cameraSchema,
  createCamera,
  deleteCamera,
  getInspectionSettings,
  inspectionSettingsSchema,
  listCameras,
  resetRule,
  ruleSchema,
  ruleTable,
  saveInspectionSettings,
  saveRule,
} from "~/models/inspection.server";
import { describeEffect } from "~/domain/anomaly-classes";
import { cameraPlan } from "~/domain/flight-conditions";

export const meta: Route.MetaFunction = () => [{ title: "Inspection · Settings · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requirePermission(request, "settings:users");
  const [cameras, rules, settings] = await Promise.all([listCameras(principal.orgId), ruleTable(principal.orgId), getInspectionSettings(principal.orgId)]);
  return {
    cameras: cameras.map((c) => ({
      id: c.id,
      name: c.name,
      widthPx: c.widthPx,
      heightPx: c.heightPx,
      pixelPitchUm: c.pixelPitchUm,
      lenses: c.lenses.map((l) => {
        const p = cameraPlan(c, l.focalLengthMm, settings.cellSizeM);
        return { id: l.id, focalLengthMm: l.focalLengthMm, gsdCmAt40: p.gsdCmAt(40), cellMax: p.cellLevelMaxAltitudeM, stringMax: p.stringLevelMaxAltitudeM, footprintAt25: p.footprintAt(25) };
      }),
    })),
    rules: rules.map((r) => ({ ...r, effectText: describeEffect(r.rule) })),
    settings,
  };
}

export async function action({ request }: Route.ActionArgs) {
  const principal = await requirePermission(request, "settings:users");
  const actor = { orgId: principal.orgId, userId: principal.userId };
  const form = await request.formData();
  const obj = Object.fromEntries([...form.entries()].filter(([, v]) => typeof v === "string")) as Record<string, string>;
  switch (form.get("intent")) {
    case "camera": {
      const p = cameraSchema.safeParse(obj);
      if (!p.success) return data({ section: "camera", error: p.error.issues[0]!.message }, { status: 400 });
      if (!(await createCamera(actor, p.data))) return data({ section: "camera", error: `A camera named “${p.data.name}” exists already` }, { status: 400 });
      return { section: "camera", error: null };
    }
    case "delete-camera": {
      const id = z.uuid().safeParse(obj.id);
      if (!id.success || !(await deleteCamera(actor, id.data))) return data({ section: "camera", error: "No such camera" }, { status: 404 });
      return { section: "camera", error: null };
    }
    case "rule": {
      const p = ruleSchema.safeParse(obj);
      if (!p.success) return data({ section: "rules", error: p.error.issues[0]!.message }, { status: 400 });
      await saveRule(actor, p.data);
      return { section: "rules", error: null };
    }
    case "reset-rule": {
      await resetRule(actor, String(obj.classKey ?? ""));
      return { section: "rules", error: null };
    }
    case "settings": {
      const p = inspectionSettingsSchema.safeParse(obj);
      if (!p.success) return data({ section: "settings", error: p.error.issues[0]!.message }, { status: 400 });
      await saveInspectionSettings(actor, p.data);
      return { section: "settings", error: null };
    }
    default:
      return data({ section: "", error: "Unknown request" }, { status: 400 });
  }
}

export default function InspectionSettings({ loaderData, actionData }: Route.ComponentProps) {
  const { cameras, rules, settings } = loaderData;
  const err = (section: string) => (actionData?.section === section && actionData.error ? <p className="field-error" role="alert">{actionData.error}</p> : null);
  return (
    <div className="space-y-6">
      <h1 className="h1">Settings</h1>
      <SettingsTabs />

      <section className="panel space-y-3" aria-labelledby="rules">
        <h2 className="h2" id="rules">Anomaly classes: severity and expected power effect</h2>
        <p className="text-sm text-muted">
          Class names follow the trade's wording and the abnormality patterns of IEC TS 62446-3. Severities and effects are Sunsift's defaults, not values of that
          specification: change them to your own practice. The effect decides how much of a flag's deficit a finding explains.
        </p>
        {err("rules")}
        <div className="overflow-x-auto">
          <table className="table" data-testid="rules-table">
            <thead><tr><th>Class</th><th>What it looks like</th><th>Severity</th><th>Expected effect</th><th></th></tr></thead>
            <tbody>
              {rules.map((r) => (
                <tr key={r.key}>
                  <td className="font-medium">{r.name}{r.isDefault ? null : <span className="ml-1 rounded bg-amber-100 px-1 text-xs text-warn">changed</span>}</td>
                  <td className="text-sm text-muted">{r.pattern}</td>
                  <td colSpan={2}>
                    <Form method="post" className="flex flex-wrap items-center gap-2">
                      <input type="hidden" name="intent" value="rule" />
                      <input type="hidden" name="classKey" value={r.key} />
                      <select className="input w-28" name="severity" defaultValue={r.rule.severity} aria-label={`Severity of ${r.name}`}>
                        <option value="low">low</option><option value="medium">medium</option><option value="high">high</option>
                      </select>
                      <input className="input w-24" name="effectAmount" defaultValue={String(Math.round(r.rule.effectAmount * 1000) / 1000)} inputMode="decimal" aria-label={`Effect amount of ${r.name}`} />
                      <select className="input w-32" name="effectUnit" defaultValue={r.rule.effectUnit} aria-label={`Effect unit of ${r.name}`}>
                        <option value="string">string(s)</option><option value="module">module(s)</option><option value="none">no effect</option>
                      </select>
                      <button className="btn-secondary" type="submit">Save</button>
                      <span className="text-xs text-muted">now: {r.effectText}</span>
                    </Form>
                  </td>
                  <td>
                    {r.isDefault ? null : (
                      <Form method="post"><input type="hidden" name="intent" value="reset-rule" /><input type="hidden" name="classKey" value={r.key} /><button className="text-sm underline" type="submit">Back to default</button></Form>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      <section className="panel space-y-3" aria-labelledby="cameras">
        <h2 className="h2" id="cameras">Camera profiles</h2>
        {cameras.length === 0 ? <p className="text-muted">No camera yet. Add the thermal cameras your pilots fly; the flight log then shows the ground sample distance and the highest useful altitude.</p> : (
          <table className="table" data-testid="cameras-table">
            <thead><tr><th>Camera</th><th>Sensor</th><th>Lens</th><th>GSD at 40 m</th><th>Cell-level max</th><th>String-level max</th><th>Footprint at 25 m</th><th></th></tr></thead>
            <tbody>
              {cameras.flatMap((c) => c.lenses.map((l, i) => (
                <tr key={`${c.id}-${l.id}`}>
                  <td className="font-medium">{i === 0 ? c.name : ""}</td>
                  <td>{i === 0 ? `${c.widthPx}×${c.heightPx}, ${c.pixelPitchUm} µm` : ""}</td>
                  <td>{l.focalLengthMm} mm</td>
                  <td>{l.gsdCmAt40.toFixed(2)} cm</td>
                  <td>{l.cellMax.toFixed(1)} m</td>
                  <td>{l.stringMax.toFixed(1)} m</td>
                  <td>{l.footprintAt25.widthM.toFixed(1)} × {l.footprintAt25.heightM.toFixed(1)} m</td>
                  <td>{i === 0 ? <Form method="post"><input type="hidden" name="intent" value="delete-camera" /><input type="hidden" name="id" value={c.id} /><button className="text-sm text-bad underline" type="submit">Delete</button></Form> : null}</td>
                </tr>
              )))}
            </tbody>
          </table>
        )}
        <p className="text-xs text-muted">GSD = altitude × pixel pitch ÷ focal length. Cell-level: at least 5×5 infrared pixels per cell (IEC TS 62446-3 as summarised); string-level scans: at least 2 pixels per cell (common practice). Cell edge {Math.round(settings.cellSizeM * 1000)} mm.</p>
        <Form method="post" className="grid gap-3 sm:grid-cols-5">
          <input type="hidden" name="intent" value="camera" />
          <div><label className="label" htmlFor="cam-name">Name</label><input className="input" id="cam-name" name="name" placeholder="Radiometric 640" required /></div>
          <div><label className="label" htmlFor="cam-w">Width (px)</label><input className="input" id="cam-w" name="widthPx" defaultValue="640" inputMode="numeric" /></div>
          <div><label className="label" htmlFor="cam-h">Height (px)</label><input className="input" id="cam-h" name="heightPx" defaultValue="512" inputMode="numeric" /></div>
          <div><label className="label" htmlFor="cam-p">Pixel pitch (µm)</label><input className="input" id="cam-p" name="pixelPitchUm" defaultValue="17" inputMode="decimal" /></div>
          <div><label className="label" htmlFor="cam-f">Lenses (mm)</label><input className="input" id="cam-f" name="focalLengthsMm" placeholder="9, 13, 19" /></div>
          <div className="sm:col-span-5"><button className="btn" type="submit">Add camera</button>{err("camera")}</div>
        </Form>
      </section>

      <section className="panel space-y-3" aria-labelledby="xref-settings">
        <h2 className="h2" id="xref-settings">Cross-reference</h2>
        <Form method="post" className="flex flex-wrap items-end gap-3">
          <input type="hidden" name="intent" value="settings" />
          <div><label className="label" htmlFor="win">Findings count for a flag up to (days before its first or after its last day)</label><input className="input w-32" id="win" name="crossRefWindowDays" defaultValue={settings.crossRefWindowDays} inputMode="numeric" /></div>
          <div><label className="label" htmlFor="cell">Cell edge (m)</label><input className="input w-32" id="cell" name="cellSizeM" defaultValue={settings.cellSizeM} inputMode="decimal" /></div>
          <button className="btn" type="submit">Save</button>
        </Form>
        {err("settings")}
        <p className="text-sm text-muted">The explained threshold (default 0.7) is a site setting, beside the other analysis thresholds.</p>
      </section>
    </div>
  );
}
