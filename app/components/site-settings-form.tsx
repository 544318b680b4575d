import { useMemo, useState } from "react";
import { Form, useNavigation } from "react-router";
import { MODULE_TYPES, PEER_GROUPINGS, type SiteSettingsInput } from "~/domain/site-settings";

const MODULE_TYPE_LABELS: Record<(typeof MODULE_TYPES)[number], string> = {
  glass_glass_open_rack: "Glass/cell/glass, open rack",
  glass_glass_close_roof: "Glass/cell/glass, close roof mount",
  glass_polymer_open_rack: "Glass/cell/polymer sheet, open rack",
  glass_polymer_insulated_back: "Glass/cell/polymer sheet, insulated back",
  polymer_thinfilm_steel_open_rack: "Polymer/thin-film/steel, open rack",
};

type Errors = Record<string, string>;

function Field(p: { name: string; label: string; value: unknown; errors: Errors; warnings?: Errors; unit?: string; type?: string; step?: string; hint?: string; list?: string }) {
  const id = p.name.replace(/\./g, "-");
  return (
    <div>
      <label className="label" htmlFor={id}>{p.label}{p.unit ? <span className="font-normal text-muted"> ({p.unit})</span> : null}</label>
      <input className="input" id={id} name={p.name} type={p.type ?? "text"} inputMode={p.type === "number" ? "decimal" : undefined} step={p.step ?? "any"} list={p.list}
        defaultValue={p.value === undefined || p.value === null ? "" : String(p.value)} aria-invalid={p.errors[p.name] ? true : undefined} aria-describedby={p.errors[p.name] ? `${id}-err` : undefined} />
      {p.hint ? <p className="mt-1 text-xs text-muted">{p.hint}</p> : null}
      {p.errors[p.name] ? <p id={`${id}-err`} className="field-error">{p.errors[p.name]}</p> : null}
      {p.warnings?.[p.name] ? <p className="mt-1 text-sm text-warn">⚠ {p.warnings[p.name]}</p> : null}
    </div>
  );
}

export function SiteSettingsForm({ initial, errors, warnings, submitLabel }: { initial: Partial<SiteSettingsInput>; errors: Errors; warnings: Errors; submitLabel: string }) {
  const nav = useNavigation();
  const [mounting, setMounting] = useState(initial.mounting?.kind ?? "fixed");
  const [tempKind, setTempKind] = useState(initial.temperatureSource?.kind ?? "sandia");
  const zones = useMemo(() => (typeof Intl.supportedValuesOf === "function" ? Intl.supportedValuesOf("timeZone") : []), []);
  const m = (initial.mounting ?? {}) as Record<string, unknown>;
  const mod = (initial.module ?? {}) as Record<string, unknown>;
  const th = (initial.thresholds ?? {}) as Record<string, unknown>;
  const ts = (initial.temperatureSource ?? {}) as Record<string, unknown>;
  const num = "number";
  return (
    <Form method="post" className="space-y-6" noValidate>
      {errors._form ? <p role="alert" className="rounded-md bg-red-50 p-3 text-bad">{errors._form}</p> : null}
      <fieldset className="panel grid gap-4 md:grid-cols-3">
        <legend className="h2 px-1">Site</legend>
        <Field name="name" label="Name" value={initial.name} errors={errors} />
        <Field name="timezone" label="Time zone (IANA)" value={initial.timezone} errors={errors} list="tz-list" hint="Type to search, e.g. Europe/Madrid" />
        <datalist id="tz-list">{zones.map((z) => <option key={z} value={z} />)}</datalist>
        <Field name="elevation" label="Elevation" unit="m" type={num} value={initial.elevation} errors={errors} />
        <Field name="latitude" label="Latitude" unit="° north" type={num} value={initial.latitude} errors={errors} />
        <Field name="longitude" label="Longitude" unit="° east" type={num} value={initial.longitude} errors={errors} hint="West is negative" />
        <div />
        <Field name="dcCapacityKw" label="DC capacity" unit="kWp" type={num} value={initial.dcCapacityKw} errors={errors} />
        <Field name="acCapacityKw" label="AC capacity" unit="kW" type={num} value={initial.acCapacityKw} errors={errors} />
        <div />
        <Field name="currency" label="Currency" value={initial.currency} errors={errors} hint="Three letters, e.g. EUR" />
        <Field name="tariffPerMwh" label="Tariff" unit="per MWh" type={num} value={initial.tariffPerMwh} errors={errors} />
        <Field name="metStations[]" label="Weather station name" value={initial.metStations?.[0] ?? "MET1"} errors={errors} />
      </fieldset>

      <fieldset className="panel grid gap-4 md:grid-cols-3">
        <legend className="h2 px-1">Mounting</legend>
        <div className="md:col-span-3 flex gap-6">
          <label className="flex items-center gap-2"><input type="radio" name="mounting.kind" value="fixed" checked={mounting === "fixed"} onChange={() => setMounting("fixed")} /> Fixed tilt</label>
          <label className="flex items-center gap-2"><input type="radio" name="mounting.kind" value="tracker" checked={mounting === "tracker"} onChange={() => setMounting("tracker")} /> Single-axis tracker</label>
        </div>
        {mounting === "fixed" ? (
          <>
            <Field name="mounting.tilt" label="Tilt" unit="°" type={num} value={m.tilt} errors={errors} />
            <Field name="mounting.azimuth" label="Azimuth" unit="° from north" type={num} value={m.azimuth ?? 180} errors={errors} hint="180 = facing south" />
          </>
        ) : (
          <>
            <Field name="mounting.axisAzimuth" label="Axis azimuth" unit="° from north" type={num} value={m.axisAzimuth ?? 180} errors={errors} hint="180 = north–south axis" />
            <Field name="mounting.maxAngle" label="Rotation limit" unit="°" type={num} value={m.maxAngle ?? 55} errors={errors} />
            <Field name="mounting.gcr" label="Ground coverage ratio" type={num} value={m.gcr ?? 0.35} errors={errors} />
          </>
        )}
      </fieldset>

      <fieldset className="panel grid gap-4 md:grid-cols-4">
        <legend className="h2 px-1">Module datasheet (STC)</legend>
        <Field name="module.pmp" label="Pmp" unit="W" type={num} value={mod.pmp} errors={errors} />
        <Field name="module.vmp" label="Vmp" unit="V" type={num} value={mod.vmp} errors={errors} warnings={warnings} />
        <Field name="module.imp" label="Imp" unit="A" type={num} value={mod.imp} errors={errors} warnings={warnings} />
        <div />
        <Field name="module.voc" label="Voc" unit="V" type={num} value={mod.voc} errors={errors} />
        <Field name="module.isc" label="Isc" unit="A" type={num} value={mod.isc} errors={errors} />
        <div className="md:col-span-2" />
        <Field name="module.alphaIsc" label="Temp. coefficient of Isc" unit="%/°C" type={num} value={mod.alphaIsc} errors={errors} warnings={warnings} />
        <Field name="module.betaVoc" label="Temp. coefficient of Voc" unit="%/°C" type={num} value={mod.betaVoc} errors={errors} warnings={warnings} />
        <Field name="module.gammaPmp" label="Temp. coefficient of Pmp" unit="%/°C" type={num} value={mod.gammaPmp} errors={errors} warnings={warnings} />
      </fieldset>

      <fieldset className="panel grid gap-4 md:grid-cols-3">
        <legend className="h2 px-1">Temperature and timestamps</legend>
        <div className="md:col-span-3 flex flex-wrap gap-6">
          <label className="flex items-center gap-2"><input type="radio" name="temperatureSource.kind" value="sensor" checked={tempKind === "sensor"} onChange={() => setTempKind("sensor")} /> Module-temperature sensor</label>
          <label className="flex items-center gap-2"><input type="radio" name="temperatureSource.kind" value="sandia" checked={tempKind === "sandia"} onChange={() => setTempKind("sandia")} /> Sandia model from ambient, irradiance and wind</label>
        </div>
        {tempKind === "sensor" ? (
          <Field name="temperatureSource.backOffsetC" label="Back-of-module to cell offset" unit="°C" type={num} value={ts.backOffsetC ?? 3} errors={errors} />
        ) : (
          <div>
            <label className="label" htmlFor="moduleType">Module and mount type</label>
            <select className="input" id="moduleType" name="temperatureSource.moduleType" defaultValue={(ts.moduleType as string) ?? "glass_polymer_open_rack"}>
              {MODULE_TYPES.map((t) => <option key={t} value={t}>{MODULE_TYPE_LABELS[t]}</option>)}
            </select>
          </div>
        )}
        <div>
          <label className="label" htmlFor="dataConvention">Timestamps label</label>
          <select className="input" id="dataConvention" name="dataConvention" defaultValue={initial.dataConvention ?? "start"}>
            <option value="start">the start of the interval</option>
            <option value="end">the end of the interval</option>
          </select>
        </div>
      </fieldset>

      <fieldset className="panel grid gap-4 md:grid-cols-4">
        <legend className="h2 px-1">Analysis thresholds</legend>
        <Field name="thresholds.minPoa" label="Minimum POA for analysis" unit="W/m²" type={num} value={th.minPoa ?? 600} errors={errors} />
        <Field name="thresholds.minSunElevation" label="Minimum sun elevation" unit="°" type={num} value={th.minSunElevation ?? 10} errors={errors} />
        <Field name="thresholds.robustZ" label="Robust z threshold" type={num} value={th.robustZ ?? -3.5} errors={errors} />
        <Field name="thresholds.minDeficitStrings" label="Minimum deficit" unit="strings" type={num} value={th.minDeficitStrings ?? 0.5} errors={errors} />
        <Field name="thresholds.flagDaysN" label="Flag on N days…" type={num} step="1" value={th.flagDaysN ?? 3} errors={errors} />
        <Field name="thresholds.flagDaysM" label="…of the last M days" type={num} step="1" value={th.flagDaysM ?? 5} errors={errors} />
        <div>
          <label className="label" htmlFor="peerGroup">Peer group</label>
          <select className="input" id="peerGroup" name="thresholds.peerGroup" defaultValue={(th.peerGroup as string) ?? "inverter"}>
            {PEER_GROUPINGS.map((g) => <option key={g} value={g}>{g === "inverter" ? "Combiners of the same inverter" : g === "block" ? "Combiners of the same block" : "Same string count and orientation"}</option>)}
          </select>
        </div>
        <Field name="thresholds.explainedThreshold" label="Explained at" unit="fraction" type={num} value={th.explainedThreshold ?? 0.7} errors={errors} />
        <Field name="thresholds.recoveryDays" label="Days compared for recovery" type={num} step="1" value={th.recoveryDays ?? 5} errors={errors} />
        <Field name="thresholds.irMinPoa" label="IR minimum POA" unit="W/m²" type={num} value={th.irMinPoa ?? 600} errors={errors} />
        <Field name="thresholds.irMaxWindKmh" label="IR maximum wind" unit="km/h" type={num} value={th.irMaxWindKmh ?? 28} errors={errors} />
        <Field name="thresholds.irMaxCloudOkta" label="IR maximum cloud" unit="okta" type={num} step="1" value={th.irMaxCloudOkta ?? 2} errors={errors} />
      </fieldset>
      <button className="btn" type="submit" disabled={nav.state !== "idle"}>{nav.state !== "idle" ? "Saving…" : submitLabel}</button>
    </Form>
  );
}
