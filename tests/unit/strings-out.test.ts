import { describe, expect, it } from "vitest";
import { energyValue, estimateStringsOut, lostEnergyKwh, stringsOutFromCurrent, totalLostEnergyKwh } from "~/domain/strings-out";

describe("estimateStringsOut", () => {
  it("a 12-string combiner at 91.7 % of its peers is one string down", () => {
    // one of N parallel strings is 1/N of the current [P]; 12·(1 − 0.917) = 0.996 [X]
    const e = estimateStringsOut({ oi: 0.917, peerMedianOi: 1, nStrings: 12 })!;
    expect(e.k).toBe(1);
    expect(e.exact).toBeCloseTo(0.996, 6);
    expect(e.confidence).toBeCloseTo(1 - 2 * 0.004, 6);
  });
  it("confidence 1 on an integer, 0 half-way", () => {
    expect(estimateStringsOut({ oi: 0.75, peerMedianOi: 1, nStrings: 8 })!.confidence).toBeCloseTo(1, 12);
    const half = estimateStringsOut({ oi: 1 - 2.5 / 10, peerMedianOi: 1, nStrings: 10 })!;
    expect(half.residual).toBeCloseTo(0.5, 12);
    expect(half.confidence).toBeCloseTo(0, 12);
  });
  it("relative to the peer median, clamped to [0, N]", () => {
    expect(estimateStringsOut({ oi: 0.88, peerMedianOi: 0.96, nStrings: 12 })!.k).toBe(1);
    expect(estimateStringsOut({ oi: 1.05, peerMedianOi: 1, nStrings: 12 })!.k).toBe(0);
    expect(estimateStringsOut({ oi: -0.2, peerMedianOi: 1, nStrings: 12 })!.k).toBe(12);
    expect(estimateStringsOut({ oi: 0.9, peerMedianOi: 0, nStrings: 12 })).toBeNull();
  });
  it("from current: N 24, i0 9.5 A, I 199.5 A at G 1000, Tc 25 → r 0.875, k 3", () => {
    // worked vector from In = I·(1000/G)/(1+α(Tc−25)), r = In/(N·i0) [X]
    const e = stringsOutFromCurrent({ current: 199.5, poa: 1000, cellTempC: 25, alphaImpPerC: 0.0005, nStrings: 24, peerStringCurrentStc: 9.5 })!;
    expect(e.ratio).toBeCloseTo(0.875, 12);
    expect(e.k).toBe(3);
  });
});

describe("lostEnergyKwh", () => {
  it("28.5 A × 800 V × 0.25 h = 5.70 kWh", () => {
    // ΔE = (N·i0·G/1000 − I)·Vdc·Δt [X]
    const iv = { nStrings: 24, peerStringCurrentStc: 9.5, poa: 1000, current: 199.5, vdc: 800, hours: 0.25 };
    expect(lostEnergyKwh(iv)).toBeCloseTo(5.7, 10);
    expect(totalLostEnergyKwh([iv, iv, { ...iv, current: 228 }])).toBeCloseTo(11.4, 10);
  });
  it("applies the temperature factor when given", () => {
    // by hand [X]: expected 24·9.5·1·(1 + 0.0005·20) = 230.28 A; (230.28 − 199.5)·800·0.25/1000 = 6.156 kWh
    expect(
      lostEnergyKwh({ nStrings: 24, peerStringCurrentStc: 9.5, poa: 1000, current: 199.5, vdc: 800, hours: 0.25, cellTempC: 45, alphaImpPerC: 0.0005 }),
    ).toBeCloseTo(6.156, 10);
  });
  it("money from a tariff per MWh", () => {
    // 5.70 kWh at 60 per MWh = 0.342 [X]
    expect(energyValue(5.7, 60)).toBeCloseTo(0.342, 12);
  });
});
