/**
 * Peer statistics: classical z-scores and the modified (robust) z-score of Iglewicz & Hoaglin
 * (1993), Mi = 0.6745 (xi − median) / MAD, |Mi| > 3.5 a potential outlier
 * (NIST/SEMATECH e-Handbook §1.3.5.17). Undefined scores are null, never NaN.
 */
import * as ss from "simple-statistics";

export const MODIFIED_Z_CONSTANT = 0.6745;
/** √(π/2): makes the mean absolute deviation a consistent estimator of σ for normal data. */
export const MEANAD_CONSTANT = 1.253314;

export type MadZeroPolicy = "skip" | "meanad";

export function mean(values: readonly number[]): number {
  if (values.length === 0) return NaN;
  return ss.mean(values as number[]);
}

export function median(values: readonly number[]): number {
  if (values.length === 0) return NaN;
  return ss.median(values as number[]);
}

/** Median absolute deviation about the median (unscaled). */
export function mad(values: readonly number[]): number {
  if (values.length === 0) return NaN;
  return ss.medianAbsoluteDeviation(values as number[]);
}

/** Sample standard deviation (n − 1); NaN below two values. */
export function sampleSd(values: readonly number[]): number {
  if (values.length < 2) return NaN;
  return ss.sampleStandardDeviation(values as number[]);
}

/**
 * Classical z = (x − mean)/s with the sample SD. Null when n < 2 or s = 0.
 * Note: a member included in its own group has |z| ≤ (n − 1)/√n (Shiffler 1988), so a
 * |z| > 3 rule can never fire with fewer than 11 members.
 */
export function zScores(values: readonly number[]): (number | null)[] {
  const s = sampleSd(values);
  if (!(s > 0)) return values.map(() => null);
  const m = mean(values);
  return values.map((v) => (v - m) / s);
}

/**
 * Modified z-scores. When MAD = 0 (half or more of the values identical):
 * - "skip" (default): every score is null — the group cannot rank its members;
 * - "meanad": σ is estimated as 1.253314 × mean |x − median| and M = (x − median)/σ
 *   (the substitution used by IBM SPSS for MAD = 0) [common practice].
 * Null also when n = 0 or both spreads are 0.
 */
export function modifiedZScores(values: readonly number[], opts: { madZero?: MadZeroPolicy } = {}): (number | null)[] {
  if (values.length === 0) return [];
  const med = median(values);
  const m = mad(values);
  if (m > 0) return values.map((v) => (MODIFIED_Z_CONSTANT * (v - med)) / m);
  if ((opts.madZero ?? "skip") === "skip") return values.map(() => null);
  const meanAd = mean(values.map((v) => Math.abs(v - med)));
  if (!(meanAd > 0)) return values.map(() => null);
  return values.map((v) => (v - med) / (MEANAD_CONSTANT * meanAd));
}

export interface PeerScore {
  z: number | null;
  robustZ: number | null;
  /** size of the group the statistics were computed on (member + peers) */
  n: number;
  mean: number;
  median: number;
  mad: number;
  sd: number;
}

/**
 * Score one member against its peer group. The member IS included in the group statistics
 * (group = [value, ...peers]), as in the NIST formulation where every point is scored against
 * the sample it belongs to; this keeps every member scored against the same statistics at an
 * interval. Consequence: classical |z| ≤ (n − 1)/√n, which is why flags use the robust z.
 * `peers` are the other members only.
 */
export function peerScore(value: number, peers: readonly number[], opts: { madZero?: MadZeroPolicy } = {}): PeerScore {
  const group = [value, ...peers];
  return {
    z: zScores(group)[0],
    robustZ: modifiedZScores(group, opts)[0],
    n: group.length,
    mean: mean(group),
    median: median(group),
    mad: mad(group),
    sd: sampleSd(group),
  };
}

/** Theoretical maximum |z| of a member of its own group of n (Shiffler 1988). */
export function maxAbsZ(n: number): number {
  return (n - 1) / Math.sqrt(n);
}
