/**
 * Interval quality rules. Each rule returns a boolean mask (true = the rule fires) over a
 * regularly spaced series; `combineReasons` keeps, for every interval, every rule that fired,
 * so an excluded interval always says why. Missing values are `null` (never 0).
 * Defaults are settings, each with its source.
 */

export type ExclusionReason =
  | "night"
  | "low_sun"
  | "low_poa"
  | "ramp"
  | "stale"
  | "out_of_range"
  | "clipping"
  | "gap"
  | "zero_current"
  | "sensor_disagreement";

/**
 * Reasons that remove an interval from peer statistics. "zero_current" is NOT among them:
 * a combiner at zero while its peers produce is a fault to flag, not bad data.
 */
export const EXCLUDING_REASONS: ReadonlySet<ExclusionReason> = new Set<ExclusionReason>([
  "night",
  "low_sun",
  "low_poa",
  "ramp",
  "stale",
  "out_of_range",
  "clipping",
  "gap",
  "sensor_disagreement",
]);

export type Series = readonly (number | null | undefined)[];
type Mask = boolean[];

const present = (v: number | null | undefined): v is number => v != null && Number.isFinite(v);

/** Merge rule masks into per-interval reason lists. */
export function combineReasons(n: number, rules: readonly { reason: ExclusionReason; mask: readonly boolean[] }[]): ExclusionReason[][] {
  const out: ExclusionReason[][] = Array.from({ length: n }, () => []);
  for (const { reason, mask } of rules) for (let i = 0; i < n; i++) if (mask[i] && !out[i].includes(reason)) out[i].push(reason);
  return out;
}

export function isExcluded(reasons: readonly ExclusionReason[]): boolean {
  return reasons.some((r) => EXCLUDING_REASONS.has(r));
}

/** POA below the analysis threshold (default 600 W/m², the IR-inspection minimum of IEC TS 62446-3). */
export function lowPoaMask(poa: Series, threshold = 600): Mask {
  return poa.map((g) => present(g) && g < threshold);
}

/** Sun elevation below a minimum (default 10°, common practice: low sun means high AOI and row shading). */
export function lowSunMask(elevationDeg: readonly number[], minElevationDeg = 10): Mask {
  return elevationDeg.map((e) => e < minElevationDeg);
}

export interface RampOpts {
  intervalMinutes: number;
  /**
   * Largest accepted change between consecutive intervals, W/m² per minute of interval
   * (default 20 = 100 W/m² per 5 min, common practice). Clear-sky mornings change GHI by
   * < 10 W/m² per minute; a passing cloud by hundreds.
   */
  maxRateWm2PerMin?: number;
  /** when given, the clear-sky change is subtracted so sunrise/sunset slopes never count as ramps */
  clearSky?: readonly number[];
}

/** Irradiance ramps: both intervals on either side of a step larger than the limit are marked. */
export function rampMask(irradiance: Series, opts: RampOpts): Mask {
  const limit = (opts.maxRateWm2PerMin ?? 20) * opts.intervalMinutes;
  const cs = opts.clearSky;
  const mask = irradiance.map(() => false);
  for (let i = 1; i < irradiance.length; i++) {
    const a = irradiance[i - 1];
    const b = irradiance[i];
    if (!present(a) || !present(b)) continue;
    const step = Math.abs(b - a - (cs ? cs[i] - cs[i - 1] : 0));
    if (step > limit) mask[i - 1] = mask[i] = true;
  }
  return mask;
}

export interface StaleOpts {
  intervalMinutes: number;
  /** run duration that counts as stale (default 45 min = 3 intervals of 15 min, NREL PV Fleets QA) */
  minDurationMin?: number;
  /** values are rounded to this many decimals before comparison (default 2) */
  decimals?: number;
  /** daytime flags: runs are counted over daytime intervals only, night is never stale */
  daytime: readonly boolean[];
}

/** Frozen values: runs of identical (rounded) daytime values lasting ≥ minDurationMin. */
export function staleMask(values: Series, opts: StaleOpts): Mask {
  const minCount = Math.max(2, Math.ceil((opts.minDurationMin ?? 45) / opts.intervalMinutes));
  const f = 10 ** (opts.decimals ?? 2);
  const key = (v: number) => Math.round(v * f);
  const mask = values.map(() => false);
  let start = 0;
  for (let i = 0; i <= values.length; i++) {
    const v = values[i];
    const s = values[start];
    const continues =
      i < values.length && i > start && opts.daytime[i] && opts.daytime[start] && present(v) && present(s) && key(v) === key(s);
    if (continues) continue;
    if (i - start >= minCount && opts.daytime[start] && present(s)) for (let j = start; j < i; j++) mask[j] = true;
    start = i;
  }
  return mask;
}

/** Inclusive numeric range check; missing values are a gap, not out of range. */
export function rangeMask(values: Series, min: number, max: number): Mask {
  return values.map((v) => present(v) && (v < min || v > max));
}

/** Module temperature physically plausible: −40…85 °C (upper bound NREL PV Fleets QA; lower bound common practice). */
export const moduleTempOutOfRange = (t: Series) => rangeMask(t, -40, 85);
/** Ambient temperature: −50…50 °C (upper bound NREL PV Fleets QA). */
export const ambientTempOutOfRange = (t: Series) => rangeMask(t, -50, 50);
/** POA kept for performance indices between 200 and 1200 W/m² (rdtools poa_filter); low side is lowPoaMask's job. */
export const poaOutOfRange = (g: Series, max = 1200) => rangeMask(g, -4, max);

/** Mean ambient above 35 suggests the logger reports °F (NREL PV Fleets QA). */
export function looksLikeFahrenheit(ambient: Series): boolean {
  const v = ambient.filter(present);
  return v.length > 0 && v.reduce((a, b) => a + b, 0) / v.length > 35;
}

/**
 * QCRad physically-possible GHI limits (Long & Shi 2008): −4 ≤ GHI ≤ 1.5·E0n·cos(Z)^1.2 + 100.
 * `e0n` extraterrestrial normal irradiance (W/m²) per interval.
 */
export function ghiQcradMask(ghi: Series, zenithDeg: readonly number[], e0n: readonly number[]): Mask {
  return ghi.map((g, i) => {
    if (!present(g)) return false;
    const mu = Math.max(0, Math.cos((zenithDeg[i] * Math.PI) / 180));
    return g < -4 || g > 1.5 * e0n[i] * mu ** 1.2 + 100;
  });
}

/** Combiner current below zero (beyond a small offset) or above factor × expected (default 1.5). */
export function currentOutOfRange(current: Series, expected: readonly number[], factor = 1.5, offsetA = 0.5): Mask {
  return current.map((c, i) => present(c) && (c < -offsetA || c > factor * Math.max(0, expected[i]) + offsetA));
}

/**
 * Missing vs zero: a missing reading is a communication gap; a present reading ≤ zeroA while
 * the model expects at least minExpectedA is a zero-current fault. Never the same thing
 * (Anderson & Blumenthal, IEEE PVSC 2020 separate outages from communication gaps).
 */
export function gapAndZeroCurrent(
  current: Series,
  expected: readonly number[],
  opts: { zeroA?: number; minExpectedA?: number } = {},
): { gap: Mask; zero: Mask } {
  const zeroA = opts.zeroA ?? 0.1;
  const minExp = opts.minExpectedA ?? 1;
  return {
    gap: current.map((c) => !present(c)),
    zero: current.map((c, i) => present(c) && c <= zeroA && expected[i] >= minExp),
  };
}

/** Two sensors of the same quantity disagree by more than rel·mean + abs (defaults 5 % + 10 W/m², common practice). */
export function sensorDisagreementMask(a: Series, b: Series, rel = 0.05, abs = 10): Mask {
  return a.map((x, i) => {
    const y = b[i];
    if (!present(x) || !present(y)) return false;
    return Math.abs(x - y) > rel * Math.abs((x + y) / 2) + abs;
  });
}

/** Daily completeness: valid ÷ daylight intervals ≥ minFraction (default 25 %, NREL PV Fleets). */
export function dayIsComplete(validCount: number, daylightCount: number, minFraction = 0.25): boolean {
  return daylightCount > 0 && validCount / daylightCount >= minFraction;
}

function quantileLinear(sorted: readonly number[], p: number): number {
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  return sorted[lo] + (h - lo) * ((sorted[Math.min(lo + 1, sorted.length - 1)] ?? sorted[lo]) - sorted[lo]);
}

export interface ClipOpts {
  intervalMinutes: number;
  mounting: "fixed" | "tracker";
  /** rolling range cutoff, percent (default 0.2) */
  rollingRangeMaxPct?: number;
  rollPeriods?: number;
}

/**
 * Clipping mask for ONE day of an inverter's AC power (true = clipped), after the rdtools
 * logic filter (Perry, Muller & Anderson, IEEE PVSC 2021, doi 10.1109/PVSC43889.2021.9518733):
 * data finer than 10 min is taken as 15-min medians; points below 10 % of the daily maximum
 * are ignored; a forward window of 3 periods (5 for trackers) whose range is < 0.2 % of its
 * mid-value is clipping; the day's clipping level band is then applied to every point.
 * The multi-day overall threshold of rdtools is not applied (single-day scope).
 * Combiners under the inverter inherit this mask.
 */
export function clippingMask(powerAc: Series, opts: ClipOpts): Mask {
  const n = powerAc.length;
  const none = powerAc.map(() => false);
  const vals = powerAc.filter(present);
  if (vals.length < 3) return none;
  const m = vals.reduce((a, b) => a + b, 0) / vals.length;
  const sd = Math.sqrt(vals.reduce((a, b) => a + (b - m) ** 2, 0) / Math.max(1, vals.length - 1));
  if (!(m > 0) || sd / m < 0.1) return none; // a frozen day says nothing about clipping

  const highFreq = opts.intervalMinutes < 10;
  const binSize = highFreq ? Math.max(1, Math.round(15 / opts.intervalMinutes)) : 1;
  const freq = highFreq ? 15 : opts.intervalMinutes;
  const bins: (number | null)[] = [];
  for (let s = 0; s < n; s += binSize) {
    const v = powerAc.slice(s, s + binSize).filter(present).sort((a, b) => a - b);
    bins.push(v.length ? quantileLinear(v, 0.5) : null);
  }
  const roll = opts.rollPeriods ?? (opts.mounting === "tracker" && freq < 30 ? 5 : 3);
  const cutoff = opts.rollingRangeMaxPct ?? 0.2;
  const dayMax = Math.max(...bins.filter(present));
  const w = bins.map((v) => (present(v) && v >= 0.1 * dayMax ? v : null));
  const rollClip = w.map((_, i) => {
    if (i + roll > w.length) return false;
    const win = w.slice(i, i + roll);
    if (!win.every(present)) return false;
    const hi = Math.max(...(win as number[]));
    const lo = Math.min(...(win as number[]));
    return ((hi - lo) / ((hi + lo) / 2)) * 100 < cutoff;
  });
  const binClip = rollClip.map((_, i) => rollClip.slice(Math.max(0, i - roll + 1), i + 1).some(Boolean));

  const clipVals: number[] = [];
  for (let i = 0; i < n; i++) {
    const v = powerAc[i];
    if (binClip[Math.floor(i / binSize)] && present(v)) clipVals.push(v);
  }
  if (clipVals.length === 0) return none;
  clipVals.sort((a, b) => a - b);
  const cMax = highFreq ? quantileLinear(clipVals, 0.99) : clipVals[clipVals.length - 1];
  const cMin = highFreq ? quantileLinear(clipVals, 0.075) : clipVals[0];
  const diff = (cMax - cMin) / cMax;
  return powerAc.map((v) => {
    if (!present(v)) return false;
    if (diff <= 0.025) return v >= cMin && v <= cMax;
    return (v >= cMax * 0.9975 && v <= cMax * 1.0025) || (v >= cMin * 0.9975 && v <= cMin * 1.0025);
  });
}
