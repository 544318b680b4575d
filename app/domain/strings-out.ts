/**
 * How many strings a combiner is missing, and what the deficit costs.
 * A combiner of N parallel strings with k open carries (N − k)/N of its peers' current, so
 * k = N·(1 − OI/OI_peer_median).
 */

export interface StringsOutEstimate {
  /** whole strings out, clamped to [0, N] */
  k: number;
  /** unrounded N·(1 − r) */
  exact: number;
  /** |exact − nearest integer|, 0 … 0.5 */
  residual: number;
  /**
   * 1 at an integer, falling linearly to 0 at a residual of 0.5: confidence = 1 − 2·residual.
   * A deficit that sits half-way between two string counts says nothing about k.
   */
  confidence: number;
  /** ratio to peers */
  ratio: number;
}

/** The flags' confidence (the estimate's `confidence` over the flag's low days), in words for the screens. */
export const CONFIDENCE_HINT =
  "Confidence: how close the combiner's shortfall against its peers is to a whole number of strings. 100 % means the missing current is exactly that many strings' worth; 0 % means it sits half-way between two counts, so the number of strings out is a guess.";

export function estimateStringsOut(p: { oi: number; peerMedianOi: number; nStrings: number }): StringsOutEstimate | null {
  if (!(p.peerMedianOi > 0) || !(p.nStrings > 0) || !Number.isFinite(p.oi)) return null;
  const ratio = p.oi / p.peerMedianOi;
  const exact = p.nStrings * (1 - ratio);
  const nearest = Math.round(exact);
  const residual = Math.abs(exact - nearest);
  const k = Math.min(p.nStrings, Math.max(0, nearest));
  return { k, exact, residual, confidence: Math.max(0, 1 - 2 * residual), ratio };
}

/**
 * Same estimate from raw current: In = I·(1000/G)/(1 + α(Tc − 25)), r = In/(N·i0) with i0
 * the peers' median per-string current at STC.
 */
export function stringsOutFromCurrent(p: {
  current: number;
  poa: number;
  cellTempC: number;
  alphaImpPerC: number;
  nStrings: number;
  peerStringCurrentStc: number;
}): StringsOutEstimate | null {
  if (!(p.poa > 0) || !(p.peerStringCurrentStc > 0)) return null;
  const iN = (p.current * (1000 / p.poa)) / (1 + p.alphaImpPerC * (p.cellTempC - 25));
  return estimateStringsOut({ oi: iN, peerMedianOi: p.nStrings * p.peerStringCurrentStc, nStrings: p.nStrings });
}

export interface LostEnergyInterval {
  nStrings: number;
  /** peers' median per-string current at STC, A */
  peerStringCurrentStc: number;
  poa: number;
  /** measured combiner current, A */
  current: number;
  /** DC operating voltage, V */
  vdc: number;
  hours: number;
  cellTempC?: number;
  alphaImpPerC?: number;
}

/**
 * ΔE = (N·i0·G/1000·(1 + α(Tc − 25)) − I)·Vdc·Δt, in kWh. The temperature factor is 1 when
 * cellTempC/alpha are omitted. Signed: a combiner above its peers gives a negative value, so
 * sums over many intervals are not biased upward by noise.
 */
export function lostEnergyKwh(p: LostEnergyInterval): number {
  const tf = p.cellTempC != null && p.alphaImpPerC != null ? 1 + p.alphaImpPerC * (p.cellTempC - 25) : 1;
  const expected = p.nStrings * p.peerStringCurrentStc * (p.poa / 1000) * tf;
  return ((expected - p.current) * p.vdc * p.hours) / 1000;
}

/** Σ ΔE over intervals, kWh. */
export function totalLostEnergyKwh(intervals: readonly LostEnergyInterval[]): number {
  return intervals.reduce((s, i) => s + lostEnergyKwh(i), 0);
}

/** Money for an energy, tariff in currency per MWh. */
export function energyValue(kwh: number, tariffPerMwh: number): number {
  return (kwh / 1000) * tariffPerMwh;
}
