import { describe, expect, it } from "vitest";
import { expectedCombinerCurrent, normalisedCurrent, outputIndex } from "~/domain/expected";

describe("expectedCombinerCurrent", () => {
  it("scales linearly with irradiance and by (1 + α(Tc − 25))", () => {
    // SAND2004-3535 (King, Boyson, Kratochvil 2004) current form Isc0·Ee·(1 + α(Tc − 25)) [C];
    // by hand [X]: 12 strings · 10 A · 0.8 · (1 + 0.0005·20) = 96.96 A
    expect(expectedCombinerCurrent({ nStrings: 12, impStc: 10, poa: 800, cellTempC: 45, alphaImpPerC: 0.0005 })).toBeCloseTo(96.96, 10);
    // STC returns n·Imp
    expect(expectedCombinerCurrent({ nStrings: 24, impStc: 9.5, poa: 1000, cellTempC: 25, alphaImpPerC: 0.0005 })).toBeCloseTo(228, 10);
    expect(expectedCombinerCurrent({ nStrings: 24, impStc: 9.5, poa: 0, cellTempC: 5, alphaImpPerC: 0.0005 })).toBe(0);
  });
});

describe("outputIndex", () => {
  it("ratio, or null when nothing is expected or data is missing", () => {
    // one string out of 12: 11/12 = 0.9167 [P]
    expect(outputIndex(88, 96)).toBeCloseTo(0.916667, 6);
    expect(outputIndex(5, 0)).toBeNull();
    expect(outputIndex(null, 10)).toBeNull();
    expect(outputIndex(Number.NaN, 10)).toBeNull();
  });
});

describe("normalisedCurrent", () => {
  it("translates to STC: I·(1000/G)/(1 + α(Tc − 25))", () => {
    // by hand [X]: 96.96 A at 800 W/m², 45 °C, α 0.0005 → 120 A at STC (inverse of the case above)
    expect(normalisedCurrent({ current: 96.96, poa: 800, cellTempC: 45, alphaImpPerC: 0.0005 })).toBeCloseTo(120, 10);
    expect(normalisedCurrent({ current: 10, poa: 0, cellTempC: 25, alphaImpPerC: 0.0005 })).toBeNull();
  });
});
