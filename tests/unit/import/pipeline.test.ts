import { readFileSync } from "node:fs";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import {
  createLineCounter,
  createLineLengthGuard,
  createRowNormaliser,
  detectFileProblems,
  inspectSample,
  validateMapping,
  type Device,
  type Reading,
  type Reject,
} from "~/domain/import";

const devices: Device[] = [
  { name: "B1-I1-C01", kind: "combiner" },
  { name: "B1-I1-C02", kind: "combiner" },
  { name: "B1-I1", kind: "inverter" },
  { name: "MET1", kind: "met" },
];

const fixture = (name: string) => readFileSync(new URL(`../../../fixtures/import/${name}`, import.meta.url));

/** What the streaming importer does, in the documented order, on an in-memory file. */
function runImport(bytes: Uint8Array, convention: "start" | "end" = "start") {
  const problem = detectFileProblems(bytes.subarray(0, 1024));
  if (problem) return { refused: problem };
  const text = new TextDecoder().decode(bytes);
  const inspection = inspectSample(text, { devices, zone: "Europe/Madrid", isComplete: true });
  if (!inspection.ok) return { refused: `line ${inspection.line}: ${inspection.reason}` };
  const guard = createLineLengthGuard(1_000_000);
  const long = guard.push(text);
  if (long) return { refused: long.reason };
  const errors = validateMapping(inspection.mapping, inspection.headers, devices);
  if (errors.length) return { refused: errors.join(" ") };
  if (!inspection.interval.ok) return { refused: inspection.interval.reason };
  const normaliser = createRowNormaliser({
    mapping: inspection.mapping,
    zone: "Europe/Madrid",
    convention,
    intervalSeconds: inspection.interval.seconds,
    devices,
    dateOrder: inspection.dateOrder ?? undefined,
    decimalSeparator: inspection.decimalSeparator,
  });
  const counter = createLineCounter();
  const readings: Reading[] = [];
  const rejects: Reject[] = [];
  Papa.parse<string[]>(text, {
    delimiter: inspection.delimiter,
    skipEmptyLines: false,
    step(result) {
      const line = counter.lineOf(result.data);
      if (line <= inspection.headerLines) return;
      const r = normaliser.row(result.data, line);
      readings.push(...r.readings);
      rejects.push(...r.rejects);
    },
  });
  return { inspection, readings, rejects, summary: normaliser.summary() };
}

describe("importing the fixture exports end to end", () => {
  it("wide, semicolons, BOM, CRLF, decimal commas, quoted header with the delimiter", () => {
    const r = runImport(fixture("wide-semicolon.csv"));
    if (!("inspection" in r) || !r.inspection?.ok) throw new Error(JSON.stringify(r));
    expect(r.inspection).toMatchObject({ delimiter: ";", decimalSeparator: ",", interval: { ok: true, seconds: 900 } });
    expect(r.inspection.headers[3]).toBe("INV 1.1 AC Power; kW");
    expect(r.readings[2]).toEqual({ ts: Date.parse("2026-06-01T10:00:00Z"), device: "B1-I1", metric: "ac_power", value: 41500 });
    expect(r.readings[4]).toEqual({ ts: Date.parse("2026-06-01T10:00:00Z"), device: "MET1", metric: "module_temperature", value: 45 });
    expect(r.rejects).toEqual([
      { line: 5, column: "MET1_POA_Wm2", value: "2300", code: "out-of-range", reason: "poa_irradiance 2300 W/m² is above the plausible maximum 2000 W/m²" },
    ]);
    expect(r.summary).toMatchObject({ lines: 5, blankLines: 1, readings: 17, missingValues: 2, rejectedLines: 0 });
  });

  it("long, with out-of-order rows, NaN, unknown device, repeat, quoted comma and truncated last line", () => {
    const r = runImport(fixture("long-mixed.csv"));
    if (!("inspection" in r)) throw new Error(r.refused);
    expect(r.readings).toHaveLength(3);
    expect(r.rejects).toEqual([
      { line: 6, value: "B9-I9-C99", code: "unknown-device", reason: 'unknown device "B9-I9-C99": not in the layout nor a weather station of the site' },
      { line: 7, value: "8.26", code: "duplicate", reason: "B1-I1-C01 dc_current at this timestamp was already given on line 2" },
      { line: 8, value: "9,31", code: "not-a-number", reason: '"9,31" is not a number' },
      { line: 9, code: "field-count", reason: "expected 4 fields as in the header, found 3: the line looks truncated" },
    ]);
    expect(r.summary).toMatchObject({ missingValues: 1, rejectedLines: 4, devicesSeen: ["B1-I1-C01", "MET1"] });
  });

  it("tab-delimited, split date/time, day-first, interval-end labels across the October clock change", () => {
    const r = runImport(fixture("wide-tab-dst.csv"), "end");
    if (!("inspection" in r) || !r.inspection?.ok) throw new Error(JSON.stringify(r));
    expect(r.inspection).toMatchObject({ delimiter: "\t", dateOrder: "DMY", interval: { ok: true, seconds: 900 } });
    expect(r.rejects.map((x) => [x.line, x.code])).toEqual([
      [3, "timestamp-ambiguous"],
      [4, "timestamp-ambiguous"],
    ]);
    // 01:45 CEST labels the interval 01:30–01:45 local, which starts at 23:30 UTC the day before.
    expect(r.readings[0]).toEqual({ ts: Date.parse("2026-10-24T23:30:00Z"), device: "B1-I1", metric: "ac_power", value: 0 });
    expect(r.readings[1]).toMatchObject({ device: "MET1", metric: "wind_speed", value: 2 });
    expect(r.summary.readings).toBe(6);
  });

  it("refuses bad files as a whole with the reason", () => {
    const enc = (s: string) => new TextEncoder().encode(s);
    expect(runImport(new Uint8Array())).toEqual({ refused: "The file is empty." });
    expect(runImport(enc("timestamp,device,metric,value\r\n"))).toEqual({ refused: "line 1: The file has a header but no data rows." });
    expect(runImport(enc("timestamp device metric value\n2026-06-01T12:00Z B1 dc_current 1\n"))).toEqual({
      refused: 'line 1: The header has a single column ("timestamp device metric value"): the delimiter is not a comma, semicolon, tab or pipe.',
    });
    expect(runImport(enc(`timestamp,device,metric,value\n2026-06-01T12:00Z,MET1,ghi,${"1".repeat(1_000_001)}\n`))).toEqual({
      refused: "Line 2 is longer than 1,000,000 characters; the file is refused.",
    });
  });
});
