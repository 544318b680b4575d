import { describe, expect, it } from "vitest";
import type { Device } from "~/domain/import/metrics";
import type { LongMapping, WideMapping } from "~/domain/import/mapping";
import { createRowNormaliser } from "~/domain/import/row-normaliser";
import { createDuplicateTracker } from "~/domain/import/duplicates";
import { parseCell } from "~/domain/import/values";

const devices: Device[] = [
  { name: "B1-I1-C01", kind: "combiner" },
  { name: "B1-I1", kind: "inverter" },
  { name: "MET1", kind: "met" },
];

const wide: WideMapping = {
  format: "wide",
  timestampColumn: 0,
  columns: [
    { header: "Time", ignore: true, note: "timestamp" },
    { header: "CB current mA", device: "B1-I1-C01", metric: "dc_current", unit: "mA" },
    { header: "INV kW", device: "B1-I1", metric: "ac_power", unit: "kW" },
    { header: "POA", device: "MET1", metric: "poa_irradiance", unit: "W/m2" },
    { header: "Tmod F", device: "MET1", metric: "module_temperature", unit: "degF" },
  ],
};

const long: LongMapping = { format: "long", timestampColumn: 0, deviceColumn: 1, metricColumn: 2, valueColumn: 3, columnCount: 4 };

const base = { zone: "Europe/Madrid", convention: "start" as const, intervalSeconds: 900, devices };
const T = (iso: string) => Date.parse(iso);

describe("createRowNormaliser, wide files", () => {
  it("converts each mapped column to canonical units at the interval start", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    expect(n.row(["2026-06-01 12:00", "8250", "41.5", "912", "113"], 2)).toEqual({
      readings: [
        { ts: T("2026-06-01T10:00:00Z"), device: "B1-I1-C01", metric: "dc_current", value: 8.25 },
        { ts: T("2026-06-01T10:00:00Z"), device: "B1-I1", metric: "ac_power", value: 41500 },
        { ts: T("2026-06-01T10:00:00Z"), device: "MET1", metric: "poa_irradiance", value: 912 },
        { ts: T("2026-06-01T10:00:00Z"), device: "MET1", metric: "module_temperature", value: 45 },
      ],
      rejects: [],
    });
  });

  it("moves interval-end labels to the interval start", () => {
    const n = createRowNormaliser({ ...base, mapping: wide, convention: "end" });
    expect(n.row(["2026-06-01 12:00", "1", "", "", ""], 2).readings[0].ts).toBe(T("2026-06-01T09:45:00Z"));
  });

  it("counts no-data markers instead of rejecting them", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    expect(n.row(["2026-06-01 12:00", "-9999", "NaN", "", "-7999.0"], 2)).toEqual({ readings: [], rejects: [] });
    n.row(["2026-06-01 12:15", "n/a", "1", "2", "70"], 3);
    const s = n.summary();
    expect(s.missingValues).toBe(5);
    expect(s.missingBySeries).toEqual({ "B1-I1-C01|dc_current": 2, "B1-I1|ac_power": 1, "MET1|poa_irradiance": 1, "MET1|module_temperature": 1 });
    expect(s.rejectedLines).toBe(0);
    expect(s.readings).toBe(3);
  });

  it("rejects a non-number with its column, value and reason, keeping the other values", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    const r = n.row(["2026-06-01 12:00", "8250", "41,5", "912", "113"], 7);
    expect(r.rejects).toEqual([{ line: 7, column: "INV kW", value: "41,5", code: "not-a-number", reason: '"41,5" is not a number' }]);
    expect(r.readings).toHaveLength(3);
  });

  it("reads decimal commas when told", () => {
    const n = createRowNormaliser({ ...base, mapping: wide, decimalSeparator: "," });
    expect(n.row(["2026-06-01 12:00", "8250", "41,5", "912", "113"], 2).readings[1].value).toBe(41500);
  });

  it("rejects physically impossible values after conversion", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    expect(n.row(["2026-06-01 12:00", "-1500", "41.5", "2300", "230"], 4).rejects).toEqual([
      { line: 4, column: "CB current mA", value: "-1500", code: "out-of-range", reason: "dc_current -1500 mA = -1.5 A is below the plausible minimum -1 A" },
      { line: 4, column: "POA", value: "2300", code: "out-of-range", reason: "poa_irradiance 2300 W/m² is above the plausible maximum 2000 W/m²" },
      { line: 4, column: "Tmod F", value: "230", code: "out-of-range", reason: "module_temperature 230 °F = 110 °C is above the plausible maximum 100 °C" },
    ]);
  });

  it("rejects a line with the wrong number of fields (a truncated last line)", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    expect(n.row(["2026-06-01 12:00", "8250", "41"], 9)).toEqual({
      readings: [],
      rejects: [{ line: 9, code: "field-count", reason: "expected 5 fields as in the header, found 3: the line looks truncated" }],
    });
    expect(n.row(["2026-06-01 12:15", "8250", "41", "5", "900", "70"], 10).rejects[0].reason).toBe(
      "expected 5 fields as in the header, found 6: a value may contain an unquoted delimiter",
    );
    expect(n.summary()).toMatchObject({ rejectedLines: 2, rejectsByCode: { "field-count": 2 } });
  });

  it("refuses the file at an enormous line", () => {
    const n = createRowNormaliser({ ...base, mapping: wide, maxLineLength: 100 });
    const r = n.row(["2026-06-01 12:00", "8".repeat(200), "1", "2", "3"], 3);
    expect(r.fatal).toEqual({ line: 3, code: "line-too-long", reason: "line 3 is 223 characters long, over the limit of 100; the file is refused" });
  });

  it("reports the repeated and the skipped hour of the clock changes, naming the line", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    expect(n.row(["2026-10-25 02:15", "1", "1", "1", "50"], 12).rejects).toEqual([
      {
        line: 12,
        value: "2026-10-25 02:15",
        code: "timestamp-ambiguous",
        reason: '"2026-10-25 02:15" happens twice in Europe/Madrid (first at +02:00, then at +01:00): write it with its UTC offset',
      },
    ]);
    expect(n.row(["2026-03-29 02:15", "1", "1", "1", "50"], 13).rejects[0]).toMatchObject({ line: 13, code: "timestamp-nonexistent" });
    expect(n.row(["1970-01-01 01:00", "1", "1", "1", "50"], 14).rejects[0]).toEqual({
      line: 14,
      value: "1970-01-01 01:00",
      code: "timestamp-implausible",
      reason: '"1970-01-01 01:00" is outside 2000–2099: a placeholder, not a reading time',
    });
  });

  it("rejects a repeated timestamp naming the first line, accepts rows out of order", () => {
    const n = createRowNormaliser({ ...base, mapping: wide });
    n.row(["2026-06-01 12:15", "1", "", "", ""], 2);
    n.row(["2026-06-01 12:00", "1", "", "", ""], 3);
    const again = n.row(["2026-06-01T10:15:00Z", "2", "", "", ""], 4);
    expect(again.rejects).toEqual([
      { line: 4, column: "CB current mA", value: "2", code: "duplicate", reason: "B1-I1-C01 dc_current at this timestamp was already given on line 2" },
    ]);
    expect(n.summary()).toMatchObject({ readings: 2, minTs: T("2026-06-01T10:00:00Z"), maxTs: T("2026-06-01T10:15:00Z"), devicesSeen: ["B1-I1-C01"] });
  });

  it("skips blank lines and joins split date and time columns", () => {
    const split: WideMapping = { format: "wide", timestampColumn: 0, timeColumn: 1, columns: [{ header: "Date", ignore: true }, { header: "Time", ignore: true }, wide.columns[2]] };
    const n = createRowNormaliser({ ...base, mapping: split, dateOrder: "DMY" });
    expect(n.row([""], 2)).toEqual({ readings: [], rejects: [] });
    expect(n.row(["01/06/2026", "12:00", "1"], 3).readings[0].ts).toBe(T("2026-06-01T10:00:00Z"));
    expect(n.summary()).toMatchObject({ lines: 2, blankLines: 1 });
  });
});

describe("createRowNormaliser, long files", () => {
  const n = createRowNormaliser({ ...base, mapping: long });
  it("takes canonical values and matches device names regardless of case", () => {
    expect(n.row(["2026-06-01T12:00:00+02:00", "b1-i1-c01", "dc_current", "8.25"], 2).readings).toEqual([
      { ts: T("2026-06-01T10:00:00Z"), device: "B1-I1-C01", metric: "dc_current", value: 8.25 },
    ]);
  });
  it("names unknown devices and metrics, and metrics a device cannot have", () => {
    expect(n.row(["2026-06-01T12:00:00+02:00", "B9-I9-C99", "dc_current", "8"], 3).rejects).toEqual([
      { line: 3, value: "B9-I9-C99", code: "unknown-device", reason: 'unknown device "B9-I9-C99": not in the layout nor a weather station of the site' },
    ]);
    expect(n.row(["2026-06-01T12:00:00+02:00", "B1-I1", "reactive_power", "8"], 4).rejects).toEqual([
      { line: 4, value: "reactive_power", code: "unknown-metric", reason: 'unknown metric "reactive_power"' },
    ]);
    expect(n.row(["2026-06-01T12:00:00+02:00", "B1-I1-C01", "ghi", "800"], 5).rejects).toEqual([
      { line: 5, value: "ghi", code: "metric-not-for-device", reason: "ghi is not a metric of combiner B1-I1-C01" },
    ]);
  });
  it("rejects the later of two identical device+metric+timestamp lines, naming the first", () => {
    expect(n.row(["2026-06-01T10:00:00Z", "B1-I1-C01", "dc_current", "8.3"], 6).rejects).toEqual([
      { line: 6, value: "8.3", code: "duplicate", reason: "B1-I1-C01 dc_current at this timestamp was already given on line 2" },
    ]);
    expect(n.row(["2026-06-01T10:00:00Z", "MET1", "poa_irradiance", "900"], 7).readings).toHaveLength(1);
  });
  it("can leave duplicates to the database", () => {
    const loose = createRowNormaliser({ ...base, mapping: long, trackDuplicates: false });
    loose.row(["2026-06-01T10:00:00Z", "MET1", "ghi", "900"], 2);
    expect(loose.row(["2026-06-01T10:00:00Z", "MET1", "ghi", "900"], 3).readings).toHaveLength(1);
  });
});

describe("parseCell", () => {
  it("separates numbers, no-data markers and garbage", () => {
    expect(parseCell(" 12.5 ")).toEqual({ kind: "number", value: 12.5 });
    expect(parseCell("-3e2")).toEqual({ kind: "number", value: -300 });
    expect(parseCell(".5")).toEqual({ kind: "number", value: 0.5 });
    for (const m of ["", "NaN", "nan", "-9999", "-9999.00", "-7999", "N/A", "null", "-"]) expect(parseCell(m)).toEqual({ kind: "missing" });
    for (const g of ["1,234.5", "0x10", "Infinity", "12.5.3", "12 A", "1e"]) expect(parseCell(g)).toEqual({ kind: "invalid" });
    expect(parseCell("12,5", ",")).toEqual({ kind: "number", value: 12.5 });
  });
});

describe("createDuplicateTracker", () => {
  it("finds repeats in any order, on and off the interval grid, over long spans", () => {
    const d = createDuplicateTracker(60);
    const t0 = Date.UTC(2026, 0, 1);
    let repeats = 0;
    for (let i = 0; i < 100_000; i++) repeats += d.check("a", t0 + (99_999 - i) * 60_000, i + 2);
    expect(repeats).toBe(0);
    expect(d.check("a", t0, 5)).toBe(100_001);
    expect(d.check("a", t0 + 99_999 * 60_000, 5)).toBe(2);
    expect(d.check("b", t0, 5)).toBe(0);
    expect(d.check("a", t0 + 30_000, 7)).toBe(0);
    expect(d.check("a", t0 + 30_000, 8)).toBe(7);
    // A stray far-away timestamp does not allocate years of slots; it is still tracked.
    expect(d.check("a", Date.UTC(2035, 0, 1), 9)).toBe(0);
    expect(d.check("a", Date.UTC(2035, 0, 1), 10)).toBe(9);
  });
});
