import { Form } from "react-router";
import type { Device, Mapping } from "~/domain/import";
import { METRICS, type Metric } from "~/domain/import/metrics";
import { UNIT_CODES } from "~/domain/import/units";

export const METRIC_LABEL: Record<Metric, string> = {
  dc_current: "DC current",
  dc_voltage: "DC voltage",
  dc_power: "DC power",
  ac_power: "AC power",
  poa_irradiance: "POA irradiance",
  ghi: "Horizontal irradiance (GHI)",
  module_temperature: "Module temperature",
  ambient_temperature: "Ambient temperature",
  wind_speed: "Wind speed",
};

const DELIMITER: Record<string, string> = { ",": "comma", ";": "semicolon", "\t": "tab", "|": "pipe" };

export interface MappingReview {
  headers: string[];
  mapping: Mapping;
  devices: Device[];
  delimiter: string;
  decimalSeparator: string;
  interval: string;
  dateOrder: string | null;
  sampleRows: string[][];
  templates: string[];
  template: string | null;
  templateFit?: { newHeaders: string[]; missingHeaders: string[] };
}

/** The mapping step: every column's device, measurement and unit, editable before the import runs. */
export function ImportMapping({ review, errors, busy }: { review: MappingReview; errors: string[]; busy: boolean }) {
  const { headers, mapping, devices } = review;
  const shownCols = Math.min(headers.length, 10);
  return (
    <div className="space-y-4">
      <dl className="panel grid grid-cols-2 gap-4 text-sm md:grid-cols-5">
        <div><dt className="text-muted">Layout</dt><dd className="font-semibold" data-testid="detected-format">{mapping.format === "long" ? "long (one reading per line)" : "wide (one column per series)"}</dd></div>
        <div><dt className="text-muted">Delimiter</dt><dd className="font-semibold" data-testid="detected-delimiter">{DELIMITER[review.delimiter] ?? review.delimiter}</dd></div>
        <div><dt className="text-muted">Decimal mark</dt><dd className="font-semibold">{review.decimalSeparator === "," ? "comma" : "point"}</dd></div>
        <div><dt className="text-muted">Interval</dt><dd className="font-semibold" data-testid="detected-interval">{review.interval}</dd></div>
        <div><dt className="text-muted">Columns</dt><dd className="font-semibold">{headers.length}</dd></div>
      </dl>

      <section className="panel space-y-2" aria-labelledby="sample-title">
        <h2 id="sample-title" className="h2">First rows of the file</h2>
        <div className="overflow-x-auto">
          <table className="table font-mono text-xs">
            <thead><tr>{headers.slice(0, shownCols).map((h, i) => <th key={i}>{h}</th>)}</tr></thead>
            <tbody>
              {review.sampleRows.slice(0, 5).map((r, i) => (
                <tr key={i}>{r.slice(0, shownCols).map((c, k) => <td key={k}>{c}</td>)}</tr>
              ))}
            </tbody>
          </table>
        </div>
        {headers.length > shownCols ? <p className="text-sm text-muted">Showing {shownCols} of {headers.length} columns.</p> : null}
      </section>

      {review.templates.length ? (
        <Form method="get" className="panel flex flex-wrap items-end gap-3">
          <div>
            <label className="label" htmlFor="template">Apply a saved mapping template</label>
            <select id="template" name="template" className="input" defaultValue={review.template ?? ""}>
              <option value="">— proposed from the headers —</option>
              {review.templates.map((t) => <option key={t} value={t}>{t}</option>)}
            </select>
          </div>
          <button type="submit" className="btn-secondary">Apply</button>
          {review.templateFit && (review.templateFit.newHeaders.length || review.templateFit.missingHeaders.length) ? (
            <p className="text-sm text-warn">
              {review.templateFit.newHeaders.length} column(s) are new to the template and were proposed afresh; {review.templateFit.missingHeaders.length} template column(s) are not in this file.
            </p>
          ) : null}
        </Form>
      ) : null}

      <Form method="post" className="space-y-4">
        <input type="hidden" name="intent" value="start" />
        <input type="hidden" name="format" value={mapping.format} />
        <section className="panel space-y-2" aria-labelledby="mapping-title">
          <h2 id="mapping-title" className="h2">Column mapping</h2>
          {mapping.format === "long" ? (
            <div className="grid gap-3 md:grid-cols-4">
              {(["timestampColumn", "deviceColumn", "metricColumn", "valueColumn"] as const).map((k) => (
                <div key={k}>
                  <label className="label" htmlFor={k}>{{ timestampColumn: "Timestamp", deviceColumn: "Device", metricColumn: "Measurement", valueColumn: "Value" }[k]} column</label>
                  <select id={k} name={k} className="input" defaultValue={String(mapping[k])}>
                    {headers.map((h, i) => <option key={i} value={i}>{h}</option>)}
                  </select>
                </div>
              ))}
              <p className="text-sm text-muted md:col-span-4">Values of a long export are in canonical units: A, V, W, W/m², °C, m/s.</p>
            </div>
          ) : (
            <>
              <input type="hidden" name="timestampColumn" value={mapping.timestampColumn} />
              {mapping.timeColumn !== undefined ? <input type="hidden" name="timeColumn" value={mapping.timeColumn} /> : null}
              <p className="text-sm text-muted">
                Leave the device empty to skip a column. Values are converted from the chosen unit to A, V, W, W/m², °C or m/s.
              </p>
              <datalist id="site-devices">
                {devices.map((d) => <option key={d.name} value={d.name}>{d.kind}</option>)}
              </datalist>
              <div className="overflow-x-auto">
                <table className="table" data-testid="mapping-table">
                  <thead><tr><th>#</th><th>Column header</th><th>Device</th><th>Measurement</th><th>Unit</th><th>Note</th></tr></thead>
                  <tbody>
                    {mapping.columns.map((c, i) => {
                      const isTime = i === mapping.timestampColumn || i === mapping.timeColumn;
                      const mapped = "device" in c;
                      return (
                        <tr key={i}>
                          <td className="text-muted">{i + 1}</td>
                          <td className="font-mono text-xs">{headers[i]}</td>
                          {isTime ? (
                            <td colSpan={3} className="text-muted">timestamp</td>
                          ) : (
                            <>
                              <td>
                                <input aria-label={`Device for ${headers[i]}`} className="input py-1" name={`device.${i}`} list="site-devices" defaultValue={mapped ? c.device : ""} />
                              </td>
                              <td>
                                <select aria-label={`Measurement for ${headers[i]}`} className="input py-1" name={`metric.${i}`} defaultValue={mapped ? c.metric : ""}>
                                  <option value="">—</option>
                                  {METRICS.map((m) => <option key={m} value={m}>{METRIC_LABEL[m]}</option>)}
                                </select>
                              </td>
                              <td>
                                <select aria-label={`Unit for ${headers[i]}`} className="input py-1" name={`unit.${i}`} defaultValue={mapped ? c.unit : ""}>
                                  <option value="">—</option>
                                  {UNIT_CODES.map((u) => <option key={u} value={u}>{u}</option>)}
                                </select>
                              </td>
                            </>
                          )}
                          <td className="text-xs text-muted">{c.note ?? ""}</td>
                        </tr>
                      );
                    })}
                  </tbody>
                </table>
              </div>
            </>
          )}
        </section>
        {errors.length ? (
          <div role="alert" className="rounded-md bg-red-50 p-3 text-bad">
            <p className="font-semibold">The mapping needs fixing before the import can run:</p>
            <ul className="ml-5 list-disc">{errors.map((e, i) => <li key={i}>{e}</li>)}</ul>
          </div>
        ) : null}
        <div className="panel flex flex-wrap items-end gap-3">
          <div className="min-w-64 flex-1">
            <label className="label" htmlFor="templateName">Save this mapping as a template (optional)</label>
            <input id="templateName" name="templateName" className="input" placeholder="e.g. SCADA monthly export" defaultValue={review.template ?? ""} maxLength={80} />
          </div>
          <button type="submit" className="btn" disabled={busy}>{busy ? "Starting…" : "Start the import"}</button>
        </div>
      </Form>
    </div>
  );
}
