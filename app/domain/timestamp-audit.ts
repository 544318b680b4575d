/**
 * Timestamp audit: compare the solar noon seen in the data with the computed solar noon,
 * day by day, to catch wrong time zones, constant logger offsets and daylight-saving
 * handling that differs from the declared zone. Follows the approach of pvanalytics
 * (`has_dst`: 7-day windows either side, 45-min threshold) and Perry, Meyers & Muller,
 * "Survey of Time Shift Detection Algorithms for Measured PV Data", PVRW 2023.
 */
import { median } from "./outliers";

export type NoonMethod = "midpoint" | "centroid";

/**
 * Observed solar noon (epoch ms) of one day of production or irradiance samples.
 * midpoint: halfway between the first and last sample above `thresholdFrac` of the day's
 * maximum; centroid: production-weighted mean time. Null with no production.
 * Sample times should be interval midpoints.
 */
export function observedSolarNoon(
  timesMs: readonly number[],
  values: readonly (number | null)[],
  method: NoonMethod = "midpoint",
  thresholdFrac = 0.1,
): number | null {
  let max = -Infinity;
  for (const v of values) if (v != null && v > max) max = v;
  if (!(max > 0)) return null;
  const cut = thresholdFrac * max;
  if (method === "midpoint") {
    let first = -1;
    let last = -1;
    values.forEach((v, i) => {
      if (v != null && v > cut) {
        if (first < 0) first = i;
        last = i;
      }
    });
    return (timesMs[first] + timesMs[last]) / 2;
  }
  let w = 0;
  let s = 0;
  values.forEach((v, i) => {
    if (v != null && v > cut) {
      w += v;
      s += v * timesMs[i];
    }
  });
  return w > 0 ? s / w : null;
}

export interface DayShift {
  /** YYYY-MM-DD */
  day: string;
  /** observed − computed solar noon, minutes; positive = data late */
  shiftMin: number | null;
}

export interface ClockChange {
  /** first day of the new regime */
  day: string;
  beforeMin: number;
  afterMin: number;
  jumpMin: number;
  /** within 15 min of ±60: a daylight-saving change the declared zone does not explain */
  dstLike: boolean;
}

export interface AuditResult {
  /** median shift over all days, minutes */
  constantShiftMin: number | null;
  changes: ClockChange[];
  /** minutes to add to the data's timestamps, per day, to match the sun (null = no data) */
  correctionMin: (number | null)[];
  /** human-readable summary */
  proposal: string;
}

export interface AuditOpts {
  /** days each side of a candidate change (default 7, pvanalytics has_dst) */
  windowDays?: number;
  /** jump that counts as a clock change, minutes (default 45, pvanalytics has_dst) */
  thresholdMin?: number;
  /** constant shifts smaller than this are left alone (default 10 min) */
  toleranceMin?: number;
  /** only these days are candidate change dates (e.g. the zone's DST dates); default: every day */
  candidateDays?: readonly string[];
}

/**
 * Find constant offsets and step changes in a daily shift series (consecutive days, oldest
 * first). A change is reported at day i when the medians of the `windowDays` before and
 * from i differ by ≥ threshold; only the strongest day of each cluster is kept.
 */
export function auditTimestamps(days: readonly DayShift[], opts: AuditOpts = {}): AuditResult {
  const w = opts.windowDays ?? 7;
  const thr = opts.thresholdMin ?? 45;
  const tol = opts.toleranceMin ?? 10;
  const cand = opts.candidateDays ? new Set(opts.candidateDays) : null;
  const vals = (from: number, to: number) =>
    days
      .slice(Math.max(0, from), Math.max(0, to))
      .map((d) => d.shiftMin)
      .filter((x): x is number => x != null);

  const avg = (x: number[]) => x.reduce((p, q) => p + q, 0) / x.length;
  const raw: (ClockChange & { score: number })[] = [];
  for (let i = 1; i < days.length; i++) {
    if (cand && !cand.has(days[i].day)) continue;
    const b = vals(i - w, i);
    const a = vals(i, i + w);
    if (b.length < Math.ceil(w / 2) || a.length < Math.ceil(w / 2)) continue;
    const beforeMin = median(b);
    const afterMin = median(a);
    const jumpMin = afterMin - beforeMin;
    // detect on medians (robust), localise on means (the mean jump peaks exactly at the step)
    const score = Math.abs(avg(a) - avg(b));
    if (Math.abs(jumpMin) >= thr)
      raw.push({ day: days[i].day, beforeMin, afterMin, jumpMin, dstLike: Math.abs(Math.abs(jumpMin) - 60) <= 15, score });
  }
  // keep the strongest jump within each run of nearby detections
  const picked: (ClockChange & { score: number })[] = [];
  for (const c of raw) {
    const prev = picked[picked.length - 1];
    const gap = prev ? days.findIndex((d) => d.day === c.day) - days.findIndex((d) => d.day === prev.day) : Infinity;
    if (prev && gap < w) {
      if (c.score > prev.score) picked[picked.length - 1] = c;
    } else picked.push(c);
  }
  const changes: ClockChange[] = picked.map(({ score: _score, ...c }) => c);

  // per-segment correction: each segment's median shift, negated
  const bounds = [0, ...changes.map((c) => days.findIndex((d) => d.day === c.day)), days.length];
  const correctionMin: (number | null)[] = days.map(() => null);
  for (let s = 0; s + 1 < bounds.length; s++) {
    const seg = vals(bounds[s], bounds[s + 1]);
    const m = seg.length ? median(seg) : null;
    for (let i = bounds[s]; i < bounds[s + 1]; i++) {
      correctionMin[i] = days[i].shiftMin == null || m == null ? null : Math.abs(m) < tol ? 0 : -Math.round(m);
    }
  }
  const all = vals(0, days.length);
  const constantShiftMin = all.length ? median(all) : null;

  const parts: string[] = [];
  if (changes.length) {
    for (const c of changes)
      parts.push(`${c.dstLike ? "daylight-saving-like" : "clock"} change of ${Math.round(c.jumpMin)} min on ${c.day}`);
  } else if (constantShiftMin != null && Math.abs(constantShiftMin) >= tol) {
    const hours = Math.round(constantShiftMin / 60);
    const tz = hours !== 0 && Math.abs(constantShiftMin - hours * 60) <= 15 ? ` (looks like a ${hours} h time-zone error)` : "";
    parts.push(`constant shift of ${Math.round(constantShiftMin)} min${tz}: shift timestamps by ${-Math.round(constantShiftMin)} min`);
  }
  return { constantShiftMin, changes, correctionMin, proposal: parts.length ? parts.join("; ") : "timestamps agree with the sun" };
}
