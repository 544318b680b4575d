/**
 * Normalised yields and performance ratio, IEC 61724-1 / IEC 61836 definitions.
 * Energies in kWh, power in kW, irradiation in kWh/m², irradiance in W/m².
 * Yields are in hours (kWh/kWp), equivalently kWh/m² over Gref = 1 kW/m².
 */

export const G_REF_W_M2 = 1000;

export interface YieldsInput {
  /** array DC rating at STC, kWp */
  p0Kw: number;
  /** in-plane irradiation over the period, kWh/m² */
  hiKwhPerM2: number;
  /** array (DC) energy, kWh */
  eaKwh: number;
  /** delivered (AC) energy, kWh */
  eoutKwh: number;
}

export interface Yields {
  /** reference yield Yr = Hi / Gref */
  yr: number;
  /** array yield Ya = EA / P0 */
  ya: number;
  /** final yield Yf = Eout / P0 */
  yf: number;
  /** performance ratio PR = Yf / Yr (null with no irradiation) */
  pr: number | null;
  /** capture loss Lc = Yr − Ya */
  lc: number;
  /** balance-of-system loss Ls = Ya − Yf */
  ls: number;
}

export function yields(p: YieldsInput): Yields {
  const yr = p.hiKwhPerM2 / (G_REF_W_M2 / 1000);
  const ya = p.eaKwh / p.p0Kw;
  const yf = p.eoutKwh / p.p0Kw;
  return { yr, ya, yf, pr: yr > 0 ? yf / yr : null, lc: yr - ya, ls: ya - yf };
}

export interface PrInterval {
  /** output power over the interval, kW */
  poutKw: number;
  /** in-plane irradiance, W/m² */
  poa: number;
  /** module temperature, °C (needed for the corrected PR) */
  tModC: number;
  /** interval duration, h */
  hours: number;
}

/** PR = Σ P·τ / Σ (P0·G/Gref·τ) over intervals; null with no irradiance. */
export function performanceRatio(intervals: readonly PrInterval[], p0Kw: number): number | null {
  let num = 0;
  let den = 0;
  for (const k of intervals) {
    num += k.poutKw * k.hours;
    den += (p0Kw * k.poa * k.hours) / G_REF_W_M2;
  }
  return den > 0 ? num / den : null;
}

/** Temperature correction factor Ck = 1 + γ(Tmod − 25). γ per °C, e.g. −0.004. */
export function temperatureCorrection(tModC: number, gammaPerC: number): number {
  return 1 + gammaPerC * (tModC - 25);
}

/**
 * Temperature-corrected PR′ = Σ P·τ / Σ (Ck·P0·G/Gref·τ). Removes the weather's temperature
 * effect so seasons compare. γ = 0 gives the plain PR.
 */
export function temperatureCorrectedPr(intervals: readonly PrInterval[], p0Kw: number, gammaPerC: number): number | null {
  let num = 0;
  let den = 0;
  for (const k of intervals) {
    num += k.poutKw * k.hours;
    den += (temperatureCorrection(k.tModC, gammaPerC) * p0Kw * k.poa * k.hours) / G_REF_W_M2;
  }
  return den > 0 ? num / den : null;
}
