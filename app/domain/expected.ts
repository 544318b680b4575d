/**
 * Expected combiner current and the output index. Currents in A, irradiance on the module
 * plane in W/m², temperatures in °C, α as a fraction per °C (0.0005 = +0.05 %/°C).
 * Current scales linearly with irradiance and weakly with cell temperature
 * (SAND2004-3535: Isc = Isc0·Ee·(1 + αIsc(Tc − 25)); the same form is used for Imp here).
 */

export interface ExpectedCurrentInput {
  nStrings: number;
  /** module Imp at STC, A (strings are series circuits: string current = module current) */
  impStc: number;
  poa: number;
  cellTempC: number;
  alphaImpPerC: number;
}

/** I_exp = n · Imp · G/1000 · (1 + α(Tc − 25)); never negative. */
export function expectedCombinerCurrent(p: ExpectedCurrentInput): number {
  const i = p.nStrings * p.impStc * (p.poa / 1000) * (1 + p.alphaImpPerC * (p.cellTempC - 25));
  return Math.max(0, i);
}

/** OI = measured / expected; null when nothing is expected or a value is missing. */
export function outputIndex(measured: number | null | undefined, expected: number | null | undefined): number | null {
  if (measured == null || expected == null || !Number.isFinite(measured) || !Number.isFinite(expected)) return null;
  if (expected <= 0) return null;
  return measured / expected;
}

/**
 * Current translated to STC irradiance and cell temperature:
 * In = I · (1000/G) / (1 + α(Tc − 25)). Null for G ≤ 0.
 */
export function normalisedCurrent(p: { current: number; poa: number; cellTempC: number; alphaImpPerC: number }): number | null {
  if (!(p.poa > 0)) return null;
  const tempFactor = 1 + p.alphaImpPerC * (p.cellTempC - 25);
  if (!(tempFactor > 0)) return null;
  return (p.current * (1000 / p.poa)) / tempFactor;
}
