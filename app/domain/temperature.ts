/**
 * Module and cell temperature models. Irradiance on the module plane in W/m², temperatures in
 * °C, wind speed in m/s (the Sandia coefficients were fitted to wind at 10 m).
 */

/** Sandia array performance model coefficients, SAND2004-3535 (King, Boyson & Kratochvil 2004) Table 1. */
export const SANDIA_MODULE_TYPES = {
  glass_glass_open_rack: { a: -3.47, b: -0.0594, deltaT: 3, label: "Glass/cell/glass, open rack" },
  glass_glass_close_roof: { a: -2.98, b: -0.0471, deltaT: 1, label: "Glass/cell/glass, close roof mount" },
  glass_polymer_open_rack: { a: -3.56, b: -0.075, deltaT: 3, label: "Glass/cell/polymer sheet, open rack" },
  glass_polymer_insulated_back: { a: -2.81, b: -0.0455, deltaT: 0, label: "Glass/cell/polymer sheet, insulated back" },
  polymer_thinfilm_steel_open_rack: { a: -3.58, b: -0.113, deltaT: 3, label: "Polymer/thin-film/steel, open rack" },
} as const;

export type SandiaModuleType = keyof typeof SANDIA_MODULE_TYPES;

export function isSandiaModuleType(s: string): s is SandiaModuleType {
  return Object.prototype.hasOwnProperty.call(SANDIA_MODULE_TYPES, s);
}

/** Back-of-module temperature: Tm = E·exp(a + b·WS) + Ta. */
export function sandiaModuleTemp(poa: number, ambientC: number, windMs: number, type: SandiaModuleType): number {
  const { a, b } = SANDIA_MODULE_TYPES[type];
  return poa * Math.exp(a + b * windMs) + ambientC;
}

/** Cell temperature from a back-of-module temperature: Tc = Tm + (E/1000)·ΔT. */
export function cellTempFromModule(moduleC: number, poa: number, deltaT: number): number {
  return moduleC + (poa / 1000) * deltaT;
}

export function sandiaCellTemp(poa: number, ambientC: number, windMs: number, type: SandiaModuleType): number {
  return cellTempFromModule(sandiaModuleTemp(poa, ambientC, windMs, type), poa, SANDIA_MODULE_TYPES[type].deltaT);
}

/** Faiman (Prog. Photovolt. 16(4), 2008): Tm = Ta + E/(U0 + U1·WS). */
export function faimanModuleTemp(poa: number, ambientC: number, windMs: number, u0 = 25, u1 = 6.84): number {
  return ambientC + poa / (u0 + u1 * windMs);
}

/** Simple NOCT model: Tc = Ta + (NOCT − 20)/800 · G. */
export function noctCellTemp(poa: number, ambientC: number, noct: number): number {
  return ambientC + ((noct - 20) / 800) * poa;
}
