import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import {
  clippingMask,
  combineReasons,
  currentOutOfRange,
  dayIsComplete,
  gapAndZeroCurrent,
  ghiQcradMask,
  isExcluded,
  looksLikeFahrenheit,
  lowPoaMask,
  lowSunMask,
  moduleTempOutOfRange,
  rampMask,
  sensorDisagreementMask,
  staleMask,
} from "~/domain/filters";

const fixture = (name: string) =>
  readFileSync(fileURLToPath(new URL(`../../fixtures/irradiance/${name}`, import.meta.url)), "utf8")
    .trim()
    .split("\n")
    .slice(1)
    .map((l) => l.split(","));

describe("ramp rule on real irradiance (NREL MIDC via pvlib-python test data)", () => {
  it("the cloudy Colorado day fires on its passing clouds", () => {
    // NREL MIDC 2018-10-14, 1-min GHI: 28 minute-to-minute jumps > 100 W/m² [C data, counted]
    const ghi = fixture("midc-2018-10-14-1min-ghi.csv").map((f) => Number(f[2]));
    let bigJumps = 0;
    for (let i = 1; i < ghi.length; i++) if (Math.abs(ghi[i] - ghi[i - 1]) > 100) bigJumps++;
    expect(bigJumps).toBe(28);
    const m = rampMask(ghi, { intervalMinutes: 1 });
    expect(m.filter(Boolean).length).toBeGreaterThanOrEqual(56);
  });
  it("the clear Tucson day does not fire", () => {
    // NREL MIDC UAT 2018-10-18 clear day [C data]
    const ghi = fixture("midc-uat-2018-10-18-1min.csv").map((f) => Number(f[6]));
    expect(rampMask(ghi, { intervalMinutes: 1 }).filter(Boolean).length).toBe(0);
  });
  it("a clear-sky reference removes the sunrise slope", () => {
    const cs = [0, 200, 400, 600];
    const g = [0, 190, 395, 600];
    expect(rampMask(g, { intervalMinutes: 5, maxRateWm2PerMin: 10 })).toEqual([true, true, true, true]);
    expect(rampMask(g, { intervalMinutes: 5, maxRateWm2PerMin: 10, clearSky: cs })).toEqual([false, false, false, false]);
  });
});

describe("stale values (NREL PV Fleets QA: 2 decimals, ≥ 45 min, daytime only) [C]", () => {
  const day = [false, true, true, true, true, true, true, false, false];
  it("three equal 15-min daytime values are stale, two are not", () => {
    const v = [0, 5.001, 5.004, 5.002, 6, 6, 7, 0, 0];
    expect(staleMask(v, { intervalMinutes: 15, daytime: day })).toEqual([false, true, true, true, false, false, false, false, false]);
  });
  it("night zeros are never stale; a gap breaks a run", () => {
    const v = [0, 3, 3, null, 3, 4, 4, 0, 0];
    expect(staleMask(v, { intervalMinutes: 15, daytime: day }).some(Boolean)).toBe(false);
  });
  it("at 1-min data a run needs 45 values", () => {
    const v = Array.from({ length: 60 }, (_, i) => (i < 44 ? 2 : i));
    const dayAll = v.map(() => true);
    expect(staleMask(v, { intervalMinutes: 1, daytime: dayAll }).some(Boolean)).toBe(false);
    const v2 = Array.from({ length: 60 }, (_, i) => (i < 45 ? 2 : i));
    expect(staleMask(v2, { intervalMinutes: 1, daytime: dayAll }).filter(Boolean).length).toBe(45);
  });
});

describe("range rules", () => {
  it("QCRad GHI limit: 1.5·E0n·cos(Z)^1.2 + 100 (Long & Shi 2008) [C]", () => {
    // by hand [X]: Z 30, E0n 1400 → 0.866025^1.2 = e^(1.2·ln 0.866025) = 0.841472;
    // 1.5·1400·0.841472 + 100 = 1867.08
    expect(ghiQcradMask([1867, 1868, -3, -5, null], [30, 30, 30, 30, 30], [1400, 1400, 1400, 1400, 1400])).toEqual([
      false,
      true,
      false,
      true,
      false,
    ]);
  });
  it("module temperature ≤ 85 °C; °F suspicion above a 35 mean (NREL PV Fleets QA) [C]", () => {
    expect(moduleTempOutOfRange([84, 86, null])).toEqual([false, true, false]);
    expect(looksLikeFahrenheit([60, 70, 80])).toBe(true);
    expect(looksLikeFahrenheit([15, 25, 30])).toBe(false);
  });
  it("current below zero or above 1.5 × expected", () => {
    expect(currentOutOfRange([-2, 0, 100, 160, null], [100, 100, 100, 100, 100])).toEqual([true, false, false, true, false]);
  });
  it("low POA (default 600 W/m², IEC TS 62446-3 IR minimum [M]) and low sun", () => {
    expect(lowPoaMask([599, 600, null])).toEqual([true, false, false]);
    expect(lowSunMask([5, 15], 10)).toEqual([true, false]);
  });
  it("sensor disagreement", () => {
    expect(sensorDisagreementMask([800, 800], [805, 870])).toEqual([false, true]);
  });
  it("daily completeness ≥ 25 % (NREL PV Fleets) [C]", () => {
    expect(dayIsComplete(12, 48)).toBe(true);
    expect(dayIsComplete(11, 48)).toBe(false);
  });
});

describe("gap vs zero current", () => {
  it("missing is a gap, zero with data is a fault — never the same", () => {
    // Anderson & Blumenthal, IEEE PVSC 2020 (outage vs communication gap) [S]
    const { gap, zero } = gapAndZeroCurrent([null, 0, 0, 50, undefined], [100, 100, 0, 100, 0]);
    expect(gap).toEqual([true, false, false, false, true]);
    expect(zero).toEqual([false, true, false, false, false]);
  });
  it("reasons are kept per interval; zero current does not exclude", () => {
    const r = combineReasons(3, [
      { reason: "low_poa", mask: [true, false, false] },
      { reason: "ramp", mask: [true, false, false] },
      { reason: "zero_current", mask: [false, true, false] },
    ]);
    expect(r).toEqual([["low_poa", "ramp"], ["zero_current"], []]);
    expect(r.map(isExcluded)).toEqual([true, false, false]);
  });
});

describe("clipping (rdtools logic filter, Perry, Muller & Anderson, IEEE PVSC 2021) [C]", () => {
  // 15-min day: a bell of 1000 kW peak clipped at 800 kW
  const bell = Array.from({ length: 96 }, (_, i) => {
    const x = (i - 48) / 14;
    return i < 20 || i > 76 ? 0 : 1000 * Math.exp(-x * x);
  });
  it("marks the plateau, not the shoulders", () => {
    const ac = bell.map((p) => Math.min(p, 800));
    const m = clippingMask(ac, { intervalMinutes: 15, mounting: "fixed" });
    ac.forEach((p, i) => expect(m[i]).toBe(p === 800));
    expect(m.filter(Boolean).length).toBeGreaterThan(5);
  });
  it("an unclipped day has no clipping", () => {
    expect(clippingMask(bell, { intervalMinutes: 15, mounting: "fixed" }).some(Boolean)).toBe(false);
  });
  it("1-min data with small noise on the plateau", () => {
    const ac: number[] = [];
    for (let i = 0; i < 1440; i++) {
      const x = (i - 720) / 210;
      const p = i < 300 || i > 1140 ? 0 : 1000 * Math.exp(-x * x);
      ac.push(p >= 800 ? 800 * (1 + 0.0004 * Math.sin(i)) : p);
    }
    const m = clippingMask(ac, { intervalMinutes: 1, mounting: "tracker" });
    const plateau = ac.map((p) => p >= 800 * 0.9995);
    const hit = m.filter((x, i) => x && plateau[i]).length;
    expect(hit / plateau.filter(Boolean).length).toBeGreaterThan(0.9);
    // nothing well below the clip level
    expect(m.some((x, i) => x && ac[i] < 780)).toBe(false);
  });
});
