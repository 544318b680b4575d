import { describe, expect, it } from "vitest";
import {
  PVWATTS_DEFAULT_LOSSES,
  PVWATTS_GAMMA,
  pvwattsAc,
  pvwattsDc,
  pvwattsInverterEfficiency,
  totalLossesPercent,
} from "~/domain/pvwatts";

describe("PVWatts v5 (Dobos 2014, NREL/TP-6A20-62641)", () => {
  it("default losses combine to 14.0757 %", () => {
    // NREL/TP-6A20-62641 default losses, combined multiplicatively [C]
    expect(PVWATTS_DEFAULT_LOSSES.shading).toBe(3);
    expect(totalLossesPercent()).toBeCloseTo(14.0757, 4);
    expect(totalLossesPercent({ soiling: 5 })).toBeCloseTo(5, 12);
    expect(totalLossesPercent({ soiling: 10, wiring: 10 })).toBeCloseTo(19, 12);
  });
  it("DC power per 1 kW at G 800, Tc 45 and G 1000, Tc 60", () => {
    // NREL/TP-6A20-62641 DC model with its γ per module type [C]; values [X]
    expect(pvwattsDc(800, 45, 1000, PVWATTS_GAMMA.standard)).toBeCloseTo(724.8, 9);
    expect(pvwattsDc(800, 45, 1000, PVWATTS_GAMMA.premium)).toBeCloseTo(744.0, 9);
    expect(pvwattsDc(800, 45, 1000, PVWATTS_GAMMA.thin_film)).toBeCloseTo(768.0, 9);
    expect(pvwattsDc(1000, 60, 1000, PVWATTS_GAMMA.standard)).toBeCloseTo(835.5, 9);
    expect(pvwattsDc(1000, 60, 1000, PVWATTS_GAMMA.premium)).toBeCloseTo(877.5, 9);
    expect(pvwattsDc(1000, 60, 1000, PVWATTS_GAMMA.thin_film)).toBeCloseTo(930.0, 9);
  });
  it("inverter efficiency curve", () => {
    // NREL/TP-6A20-62641 inverter model, ηnom 0.96, ηref 0.9637 [C]; values [X]
    expect(pvwattsInverterEfficiency(0.1)).toBeCloseTo(0.921628, 6);
    expect(pvwattsInverterEfficiency(0.5)).toBeCloseTo(0.962192, 6);
    expect(pvwattsInverterEfficiency(1.0)).toBeCloseTo(0.96, 6);
    expect(pvwattsInverterEfficiency(0)).toBeNull();
  });
  it("AC power clips at ηnom·Pdc0 and is 0 at night", () => {
    // Pac = min(η·Pdc, ηnom·Pdc0) [C]
    expect(pvwattsAc(500, 1000)).toBeCloseTo(481.096, 3);
    expect(pvwattsAc(1200, 1000)).toBeCloseTo(960, 9);
    expect(pvwattsAc(0, 1000)).toBe(0);
    // at very low load the curve goes negative: no power
    expect(pvwattsAc(1, 1000)).toBe(0);
  });
});
