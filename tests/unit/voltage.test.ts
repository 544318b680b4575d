import { describe, expect, it } from "vitest";
import { maxModulesPerString, necCorrectedVoc, necVoltageCorrectionFactor, vocAtTemperature } from "~/domain/voltage";

describe("NEC 2017 Table 690.7(A)", () => {
  it("factors by row", () => {
    // NFPA 70 (NEC 2017) Table 690.7(A), c-Si, as reproduced by an NEC-citing open tool [C]
    const rows: [number, number][] = [
      [24, 1.02], [20, 1.02], [19, 1.04], [15, 1.04], [14, 1.06], [10, 1.06], [9, 1.08], [5, 1.08],
      [4, 1.1], [0, 1.1], [-1, 1.12], [-5, 1.12], [-6, 1.14], [-10, 1.14], [-11, 1.16], [-15, 1.16],
      [-16, 1.18], [-20, 1.18], [-21, 1.2], [-25, 1.2], [-26, 1.21], [-30, 1.21], [-31, 1.23],
      [-35, 1.23], [-36, 1.25], [-40, 1.25],
    ];
    for (const [t, f] of rows) expect(necVoltageCorrectionFactor(t)).toBe(f);
    expect(necVoltageCorrectionFactor(30)).toBe(1);
    // between integer rows the colder factor applies (conservative) [P]
    expect(necVoltageCorrectionFactor(-0.5)).toBe(1.12);
    expect(necVoltageCorrectionFactor(-41)).toBeNull();
  });
  it("Voc 49.5 V at −10 °C → 56.43 V; 17 modules at 1000 V, 26 at 1500 V", () => {
    // worked from the table [X]
    const v = necCorrectedVoc(49.5, -10)!;
    expect(v).toBeCloseTo(56.43, 9);
    expect(maxModulesPerString(v, 1000)).toBe(17);
    expect(maxModulesPerString(v, 1500)).toBe(26);
    expect(maxModulesPerString(50, 1000)).toBe(20);
  });
  it("manufacturer coefficient form", () => {
    // Voc(T) = Voc·(1 + β(T − 25)); β −0.0029/°C, −10 °C → 49.5·1.1015 = 54.52425 V [X]
    expect(vocAtTemperature(49.5, -10, -0.0029)).toBeCloseTo(54.52425, 9);
  });
});
