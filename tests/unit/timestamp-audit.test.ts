import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { clearSkyPoa } from "~/domain/clearsky";
import { solarNoonUtc } from "~/domain/sun";
import { auditTimestamps, observedSolarNoon, type DayShift } from "~/domain/timestamp-audit";

const MIN = 60_000;

describe("observed solar noon on a real clear day (NREL MIDC UAT 2018-10-18 via pvlib-python test data)", () => {
  const rows = readFileSync(fileURLToPath(new URL("../../fixtures/irradiance/midc-uat-2018-10-18-1min.csv", import.meta.url)), "utf8")
    .trim()
    .split("\n")
    .slice(1)
    .map((l) => l.split(",").map(Number));
  const ghi = rows.map((f) => f[6]);
  const noon = solarNoonUtc(new Date(Date.UTC(2018, 9, 18)), -110.95534).getTime();
  const times = (utcOffset: number) => rows.map((f) => Date.UTC(2018, 0, f[2], Math.floor(f[3] / 100) - utcOffset, f[3] % 100));
  it("matches the computed solar noon when read in the station's zone (UTC−7)", () => {
    // the station logs local standard time [C data README]; both methods within 5 min [X]
    for (const m of ["midpoint", "centroid"] as const) {
      const obs = observedSolarNoon(times(-7), ghi, m)!;
      expect(Math.abs(obs - noon) / MIN).toBeLessThan(5);
    }
  });
  it("read as UTC−6 the data look an hour early", () => {
    const obs = observedSolarNoon(times(-6), ghi)!;
    expect((obs - noon) / MIN).toBeGreaterThan(-65);
    expect((obs - noon) / MIN).toBeLessThan(-55);
  });
});

/** A clear-sky plant at Golden CO, 15-min POA, logger labels shifted by `labelShiftMin(day)`. */
function shifts(year: number, month: number, nDays: number, labelShiftMin: (dayIndex: number) => number): DayShift[] {
  const lat = 39.742476;
  const lon = -105.1786;
  const out: DayShift[] = [];
  for (let d = 0; d < nDays; d++) {
    const midnight = Date.UTC(year, month, 1 + d);
    const localMidnight = midnight + 7 * 3_600_000; // the plant's day runs 07:00–07:00 UTC (UTC−7)
    const t: number[] = [];
    const p: number[] = [];
    for (let k = 0; k < 96; k++) {
      const mid = localMidnight + (k * 15 + 7.5) * MIN;
      p.push(clearSkyPoa(new Date(mid), { lat, lon, mounting: { kind: "fixed", tilt: 25, azimuth: 180 } }).poa);
      t.push(mid + labelShiftMin(d) * MIN);
    }
    const obs = observedSolarNoon(t, p)!;
    out.push({ day: new Date(midnight).toISOString().slice(0, 10), shiftMin: (obs - solarNoonUtc(new Date(midnight), lon).getTime()) / MIN });
  }
  return out;
}

describe("auditTimestamps", () => {
  it("a correct logger: no shift, no change", () => {
    const r = auditTimestamps(shifts(2024, 2, 20, () => 0));
    expect(Math.abs(r.constantShiftMin!)).toBeLessThan(8);
    expect(r.changes).toEqual([]);
    expect(r.proposal).toBe("timestamps agree with the sun");
  });
  it("a logger that follows DST in a zone declared without it: +60 min from 2024-03-10", () => {
    // pvanalytics has_dst: 7-day windows, 45-min threshold [C]; US DST began 2024-03-10 [C]
    const days = shifts(2024, 2, 24, (d) => (d >= 9 ? 60 : 0));
    const r = auditTimestamps(days);
    expect(r.changes).toHaveLength(1);
    expect(r.changes[0].day).toBe("2024-03-10");
    // 15-min samples quantise the production midpoint to 7.5 min, hence ±10 min
    expect(r.changes[0].jumpMin).toBeGreaterThan(50);
    expect(r.changes[0].jumpMin).toBeLessThan(70);
    expect(r.changes[0].dstLike).toBe(true);
    expect(r.correctionMin[0]).toBe(0);
    expect(r.correctionMin[20]).toBeGreaterThan(-70);
    expect(r.correctionMin[20]).toBeLessThan(-50);
    expect(r.proposal).toContain("daylight-saving-like change");
    // restricted to the zone's DST dates it finds the same change
    expect(auditTimestamps(days, { candidateDays: ["2024-03-10", "2024-11-03"] }).changes[0].day).toBe("2024-03-10");
  });
  it("a 30-minute step below the 45-min threshold is not a clock change but shows as a constant shift", () => {
    const r = auditTimestamps(shifts(2024, 2, 20, () => 30));
    expect(r.changes).toEqual([]);
    expect(r.constantShiftMin!).toBeGreaterThan(25);
    expect(r.proposal).toMatch(/^constant shift of (29|30|31) min/);
  });
  it("a constant one-hour error reads as a time-zone error", () => {
    const r = auditTimestamps(shifts(2024, 5, 10, () => -60));
    expect(r.proposal).toContain("-1 h time-zone error");
  });
});
