import { describe, expect, it } from "vitest";
import {
  cellTempFromModule,
  faimanModuleTemp,
  isSandiaModuleType,
  noctCellTemp,
  SANDIA_MODULE_TYPES,
  sandiaCellTemp,
  sandiaModuleTemp,
} from "~/domain/temperature";

describe("Sandia module/cell temperature", () => {
  it("coefficients of SAND2004-3535 Table 1", () => {
    // SAND2004-3535 (King, Boyson, Kratochvil 2004) [C]
    expect(SANDIA_MODULE_TYPES.glass_glass_open_rack).toMatchObject({ a: -3.47, b: -0.0594, deltaT: 3 });
    expect(SANDIA_MODULE_TYPES.glass_glass_close_roof).toMatchObject({ a: -2.98, b: -0.0471, deltaT: 1 });
    expect(SANDIA_MODULE_TYPES.glass_polymer_open_rack).toMatchObject({ a: -3.56, b: -0.075, deltaT: 3 });
    expect(SANDIA_MODULE_TYPES.glass_polymer_insulated_back).toMatchObject({ a: -2.81, b: -0.0455, deltaT: 0 });
    expect(SANDIA_MODULE_TYPES.polymer_thinfilm_steel_open_rack).toMatchObject({ a: -3.58, b: -0.113, deltaT: 3 });
    expect(isSandiaModuleType("glass_glass_open_rack")).toBe(true);
    expect(isSandiaModuleType("toString")).toBe(false);
  });
  it("E 1000, Ta 10, WS 0, glass/glass open rack → Tc 44.11703066 °C", () => {
    // pvlib-python temperature.sapm_cell docstring example, SAND2004-3535 model [C]
    expect(sandiaCellTemp(1000, 10, 0, "glass_glass_open_rack")).toBeCloseTo(44.11703066, 6);
  });
  it("E 1000, Ta 25, WS 1", () => {
    // computed from SAND2004-3535 eqs. 11–12 [X]: 1000·exp(−3.47−0.0594)+25 = 54.3225
    expect(sandiaModuleTemp(1000, 25, 1, "glass_glass_open_rack")).toBeCloseTo(54.3225, 3);
    expect(sandiaCellTemp(1000, 25, 1, "glass_glass_open_rack")).toBeCloseTo(57.3225, 3);
    // 1000·exp(−3.56−0.075)+25 = 51.3839 [X]
    expect(sandiaModuleTemp(1000, 25, 1, "glass_polymer_open_rack")).toBeCloseTo(51.3839, 3);
    expect(sandiaCellTemp(1000, 25, 1, "glass_polymer_open_rack")).toBeCloseTo(54.3839, 3);
  });
  it("cell from measured back-of-module temperature", () => {
    // SAND2004-3535 eq. 12 [C]: Tc = Tm + E/1000·ΔT → 50 + 0.8·3
    expect(cellTempFromModule(50, 800, 3)).toBeCloseTo(52.4, 10);
    // no sun, no offset
    expect(sandiaCellTemp(0, 12, 3, "glass_glass_open_rack")).toBe(12);
  });
  it("more wind cools the module", () => {
    expect(sandiaModuleTemp(900, 30, 6, "glass_glass_open_rack")).toBeLessThan(sandiaModuleTemp(900, 30, 1, "glass_glass_open_rack"));
  });
});

describe("Faiman and NOCT", () => {
  it("Faiman E 1000, Ta 25, WS 1 → 56.40704 °C", () => {
    // Faiman, Prog. Photovolt. 16(4) 2008, U0 25.0, U1 6.84 [X]: 25 + 1000/31.84
    expect(faimanModuleTemp(1000, 25, 1)).toBeCloseTo(56.40704, 4);
  });
  it("NOCT 45, G 1000, Ta 25 → 56.25 °C", () => {
    // NOCT model, Tc = Ta + (NOCT − 20)/800·G [X]
    expect(noctCellTemp(1000, 25, 45)).toBeCloseTo(56.25, 10);
  });
});
