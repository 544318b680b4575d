import { describe, expect, it } from "vitest";
import type { Device } from "~/domain/import/metrics";
import { applyTemplate, detectFormat, mappingSchema, proposeMapping, validateMapping, type WideMapping } from "~/domain/import/mapping";

const devices: Device[] = [
  { name: "B1-I1-C01", kind: "combiner" },
  { name: "B1-I1-C02", kind: "combiner" },
  { name: "B1-I2-C01", kind: "combiner" },
  { name: "B1-I1", kind: "inverter" },
  { name: "B1-I2", kind: "inverter" },
  { name: "MET1", kind: "met" },
];

// Invented headers in the styles different SCADA exports use.
const headers = [
  "Date/Time",
  "B1-I1-C01 Current [A]",
  "b1_i1_c02 Idc (mA)",
  "INV 1.2 AC Power (kW)",
  "B1-I1 P_DC MW",
  "MET1_POA_Wm2",
  "GHI W/m²",
  "Module Temp degF",
  "Tamb °C",
  "Wind speed km/h",
  "E_day kWh",
  "Status",
  "Temp 2",
  "CB 1.2.1 Current A",
  "B1-I1 Vdc",
];

describe("detectFormat", () => {
  it("recognises long files by their columns, in any order and case", () => {
    expect(detectFormat(["timestamp", "device", "metric", "value"])).toBe("long");
    expect(detectFormat(["Value", "Device", "Timestamp", "Metric"])).toBe("long");
    expect(detectFormat(headers)).toBe("wide");
  });
});

describe("proposeMapping", () => {
  const m = proposeMapping(headers, devices) as WideMapping;
  const col = (h: string) => m.columns[headers.indexOf(h)];

  it("finds the timestamp column", () => {
    expect(m.format).toBe("wide");
    expect(m.timestampColumn).toBe(0);
    expect(proposeMapping(["Date", "Time", "B1-I1 Pac kW"], devices)).toMatchObject({ timestampColumn: 0, timeColumn: 1 });
  });
  it.each([
    ["B1-I1-C01 Current [A]", "B1-I1-C01", "dc_current", "A"],
    ["b1_i1_c02 Idc (mA)", "B1-I1-C02", "dc_current", "mA"],
    ["INV 1.2 AC Power (kW)", "B1-I2", "ac_power", "kW"],
    ["B1-I1 P_DC MW", "B1-I1", "dc_power", "MW"],
    ["MET1_POA_Wm2", "MET1", "poa_irradiance", "W/m2"],
    ["GHI W/m²", "MET1", "ghi", "W/m2"],
    ["Module Temp degF", "MET1", "module_temperature", "degF"],
    ["Tamb °C", "MET1", "ambient_temperature", "degC"],
    ["Wind speed km/h", "MET1", "wind_speed", "km/h"],
    ["CB 1.2.1 Current A", "B1-I2-C01", "dc_current", "A"],
    ["B1-I1 Vdc", "B1-I1", "dc_voltage", "V"],
  ])("maps %s to %s %s in %s", (header, device, metric, unit) => {
    expect(col(header)).toMatchObject({ header, device, metric, unit });
  });
  it("explains the columns it leaves out or guessed", () => {
    expect(col("E_day kWh")).toEqual({ header: "E_day kWh", ignore: true, note: "energy (kWh) is not imported: Sunsift stores power" });
    expect(col("Status")).toMatchObject({ ignore: true, note: expect.stringContaining("no metric recognised") });
    expect(col("Temp 2")).toMatchObject({ ignore: true, note: expect.stringContaining("neither module nor ambient") });
    expect(col("INV 1.2 AC Power (kW)")).toMatchObject({ note: "device matched by its numbers to B1-I2" });
    expect(col("GHI W/m²")).toMatchObject({ note: "no station in the header: assumed MET1, the site's only weather station" });
  });
  it("does not pick a station when the site has several", () => {
    const two = [...devices, { name: "MET2", kind: "met" as const }];
    expect((proposeMapping(["ts", "GHI W/m2", "MET2 GHI W/m2"], two) as WideMapping).columns.slice(1)).toMatchObject([
      { ignore: true, note: expect.stringContaining("no device") },
      { device: "MET2", metric: "ghi" },
    ]);
  });
  it("assumes the canonical unit when the header has none, and says so", () => {
    const p = proposeMapping(["timestamp", "B1-I1-C01 current"], devices) as WideMapping;
    expect(p.columns[1]).toEqual({ header: "B1-I1-C01 current", device: "B1-I1-C01", metric: "dc_current", unit: "A", note: "no unit in the header: assumed A" });
  });
  it("gives a mapping that survives JSON and the schema", () => {
    const back = mappingSchema.parse(JSON.parse(JSON.stringify(m)));
    expect(back).toEqual(m);
    expect(validateMapping(back, headers, devices)).toEqual([]);
  });
});

describe("applyTemplate", () => {
  const template = JSON.parse(JSON.stringify(proposeMapping(headers, devices))) as WideMapping;
  // The engineer fixes two columns before saving: "Temp 2" is the new back-of-module sensor and
  // the old one is no longer trusted.
  template.columns[12] = { header: "Temp 2", device: "MET1", metric: "module_temperature", unit: "degC" };
  template.columns[7] = { header: "Module Temp degF", ignore: true, note: "old sensor, replaced by Temp 2" };

  it("maps next month's file with the same headers by itself, even reordered", () => {
    const next = [headers[0], ...headers.slice(1).reverse()];
    const fit = applyTemplate(template, next, devices);
    expect(fit.newHeaders).toEqual([]);
    expect(fit.missingHeaders).toEqual([]);
    const m = fit.mapping as WideMapping;
    expect(m.columns[next.indexOf("Temp 2")]).toEqual({ header: "Temp 2", device: "MET1", metric: "module_temperature", unit: "degC" });
    expect(m.columns.map((c) => c.header)).toEqual(next);
    expect(validateMapping(m, next, devices)).toEqual([]);
  });
  it("lists new and missing headers, proposing the new ones", () => {
    const next = [...headers.filter((h) => h !== "Status"), "B1-I1-C02 Current [A]"];
    const fit = applyTemplate(template, next, devices);
    expect(fit.missingHeaders).toEqual(["Status"]);
    expect(fit.newHeaders).toEqual(["B1-I1-C02 Current [A]"]);
    // Two columns now hold the same series: the review must settle it before import.
    expect(validateMapping(fit.mapping, next, devices)).toEqual([
      'Columns "b1_i1_c02 Idc (mA)" and "B1-I1-C02 Current [A]" both hold dc_current of B1-I1-C02.',
    ]);
  });
});

describe("validateMapping", () => {
  it("names every problem that stops an import", () => {
    const m: WideMapping = {
      format: "wide",
      timestampColumn: 5,
      columns: [
        { header: "ts", ignore: true },
        { header: "a", device: "B7-I7-C07", metric: "dc_current", unit: "A" },
        { header: "b", device: "B1-I1-C01", metric: "ghi", unit: "W/m2" },
        { header: "c", device: "B1-I1", metric: "ac_power", unit: "degC" },
      ],
    };
    expect(validateMapping(m, ["ts", "a", "b", "c"], devices)).toEqual([
      "The timestamp column 6 is outside the file's 4 columns.",
      'Column "a": device B7-I7-C07 is not in the layout or the site\'s weather stations.',
      'Column "b": ghi is not a metric of a combiner.',
      'Column "c": unit degC does not fit ac_power.',
    ]);
    expect(validateMapping({ ...m, timestampColumn: 0, columns: [m.columns[0], { header: "x", ignore: true }] }, ["ts", "x"], devices)).toEqual([
      "No column is mapped to a device and metric.",
    ]);
  });
  it("rejects a stored mapping that is not one", () => {
    expect(mappingSchema.safeParse({ format: "wide", timestampColumn: 0, columns: [{ header: "a", device: "X", metric: "dc_amps", unit: "A" }] }).success).toBe(false);
  });
});
