import { describe, expect, it } from "vitest";
import { performanceRatio, temperatureCorrectedPr, temperatureCorrection, yields } from "~/domain/yields";

describe("IEC 61724-1 yields", () => {
  it("P0 1000 kWp, Hi 6.0 kWh/m², EA 5000, Eout 4800 kWh", () => {
    // IEC 61724-1 definitions Yr = Hi/Gref, Ya = EA/P0, Yf = Eout/P0, PR = Yf/Yr [C]; Lc, Ls [S]; values by hand [X]
    const y = yields({ p0Kw: 1000, hiKwhPerM2: 6, eaKwh: 5000, eoutKwh: 4800 });
    expect(y.yr).toBeCloseTo(6.0, 12);
    expect(y.ya).toBeCloseTo(5.0, 12);
    expect(y.yf).toBeCloseTo(4.8, 12);
    expect(y.pr).toBeCloseTo(0.8, 12);
    expect(y.lc).toBeCloseTo(1.0, 12);
    expect(y.ls).toBeCloseTo(0.2, 12);
  });
  it("no irradiation: PR undefined", () => {
    expect(yields({ p0Kw: 1000, hiKwhPerM2: 0, eaKwh: 0, eoutKwh: 0 }).pr).toBeNull();
  });
});

describe("temperature-corrected PR", () => {
  const hour = [{ poutKw: 700, poa: 800, tModC: 45, hours: 1 }];
  it("G 800, Tmod 45, γ −0.004, P0 1000, Pout 700 → PR 0.875, C 0.92, PR′ 0.95109", () => {
    // PR′ = ΣPτ / Σ(Ck·P0·Gk·τ/Gref), Ck = 1 + γ(Tmod − 25) [M: IEC 61724-1 annex form]; values [X]
    expect(performanceRatio(hour, 1000)).toBeCloseTo(0.875, 12);
    expect(temperatureCorrection(45, -0.004)).toBeCloseTo(0.92, 12);
    expect(Math.abs(temperatureCorrectedPr(hour, 1000, -0.004)! - 0.95109)).toBeLessThan(1e-5);
  });
  it("γ = 0 gives the plain PR", () => {
    const two = [...hour, { poutKw: 300, poa: 350, tModC: 20, hours: 0.5 }];
    expect(temperatureCorrectedPr(two, 1000, 0)).toBeCloseTo(performanceRatio(two, 1000)!, 12);
    expect(performanceRatio([], 1000)).toBeNull();
  });
});
