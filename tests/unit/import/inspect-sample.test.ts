import { describe, expect, it } from "vitest";
import { inspectSample } from "~/domain/import/inspect-sample";
import type { WideMapping } from "~/domain/import/mapping";
import type { Device } from "~/domain/import/metrics";

const devices: Device[] = [
  { name: "CB01", kind: "combiner" },
  { name: "CB02", kind: "combiner" },
  { name: "INV01", kind: "inverter" },
  { name: "MET1", kind: "met" },
];
const opts = { devices, zone: "America/Los_Angeles", isComplete: true };

describe("inspectSample", () => {
  it("reads a units row under the header into the headers", () => {
    const text = "Time,INV01 CB01 Current,INV01 Active Power,POA\n,A,kW,W/m2\n2026-06-01 10:00,8.2,410,900\n2026-06-01 10:05,8.3,412,905\n2026-06-01 10:10,8.3,415,910\n";
    const r = inspectSample(text, opts);
    if (!r.ok) throw new Error(r.reason);
    expect(r.headerLines).toBe(2);
    expect(r.headers).toEqual(["Time", "INV01 CB01 Current [A]", "INV01 Active Power [kW]", "POA [W/m2]"]);
    expect((r.mapping as WideMapping).columns.slice(1)).toMatchObject([
      { device: "CB01", metric: "dc_current", unit: "A" },
      { device: "INV01", metric: "ac_power", unit: "kW" },
      { device: "MET1", metric: "poa_irradiance", unit: "W/m2" },
    ]);
    expect(r.interval).toEqual({ ok: true, seconds: 300, share: 1 });
  });

  it("drops the cut last line of a partial sample and detects month-first dates", () => {
    const text = "Timestamp,CB01 Idc A\n06/13/2026 10:00,1\n06/13/2026 10:15,1\n06/13/2026 10:30,1\n06/13/2026 10:45,1\n06/13/20";
    const r = inspectSample(text, { ...opts, isComplete: false });
    expect(r).toMatchObject({ ok: true, dateOrder: "MDY", headerLines: 1, interval: { ok: true, seconds: 900 } });
    expect(r.ok && r.sampleRows).toHaveLength(4);
  });

  it("tells the interval of a long export whose first 2,000 lines share two timestamps", () => {
    // 1,000 combiners per timestamp, as a large plant's long export has: rows past the first
    // 2,000 are read for their timestamps only (the interval needs three distinct ones).
    const many: Device[] = Array.from({ length: 1000 }, (_, i) => ({ name: `CB${String(i + 1).padStart(4, "0")}`, kind: "combiner" }));
    let text = "timestamp,device,metric,value\n";
    for (let s = 0; s < 6; s++)
      for (const d of many) text += `2026-06-01T10:${String(s * 5).padStart(2, "0")}:00Z,${d.name},dc_current,8.5\n`;
    const r = inspectSample(text.slice(0, -20), { ...opts, devices: many, isComplete: false });
    expect(r).toMatchObject({ ok: true, mapping: { format: "long" }, interval: { ok: true, seconds: 300, share: 1 } });
    expect(r.ok && r.sampleRows).toHaveLength(20);
  });

  it("applies a saved template and says whether it fits", () => {
    const first = inspectSample("Timestamp,CB01 Idc A,Status\n2026-06-01 10:00,1,OK\n", opts);
    if (!first.ok) throw new Error(first.reason);
    const template = JSON.parse(JSON.stringify(first.mapping));
    const next = inspectSample("Timestamp,Status,CB01 Idc A\n2026-07-01 10:00,OK,1\n", { ...opts, template });
    expect(next).toMatchObject({ ok: true, templateFit: { newHeaders: [], missingHeaders: [] } });
  });

  it("guesses decimal commas only beside a non-comma delimiter", () => {
    const r = inspectSample("Timestamp;CB01 Idc A\n2026-06-01 10:00;8,25\n2026-06-01 10:01;8,5\n", opts);
    expect(r).toMatchObject({ ok: true, delimiter: ";", decimalSeparator: "," });
  });

  it("explains files it cannot read", () => {
    expect(inspectSample("\uFEFF", opts)).toEqual({ ok: false, line: 1, reason: "The file is empty." });
    expect(inspectSample("Timestamp,CB01 Idc A\n\n", opts)).toEqual({ ok: false, line: 1, reason: "The file has a header but no data rows." });
  });
});
