/**
 * The flag rule and loss classification, over per-combiner daily results.
 *
 * A combiner is flagged when its daily robust z is below the threshold (default −3.5, the
 * Iglewicz & Hoaglin outlier cut) on at least N of the last M days (default 3 of 5) AND its
 * deficit is at least half a string. Losses that are not a strings-out problem — a whole
 * block low together (soiling, shading), bad data, clipping — are classified apart.
 */
import { median } from "./outliers";

export interface DailyResult {
  /** YYYY-MM-DD (site-local day) */
  day: string;
  /** daily robust z against peers; null when the day had no valid intervals */
  robustZ: number | null;
  /** daily output index and the peers' median of it */
  oi: number | null;
  peerMedianOi: number | null;
  nStrings: number;
}

export interface FlagRuleOpts {
  threshold?: number;
  /** days low needed … */
  minLowDays?: number;
  /** … among the last this many days */
  windowDays?: number;
  /** minimum deficit in strings (default 0.5) */
  minDeficitStrings?: number;
}

export interface FlagDecision {
  flagged: boolean;
  lowDays: number;
  windowDays: number;
  /** median strings deficit N·(1 − OI/peer median) over the low days, null without low days */
  deficitStrings: number | null;
  firstLowDay: string | null;
  lastLowDay: string | null;
}

/** Daily aggregate of per-interval scores: the median of the valid ones (null if none). */
export function dailyAggregate(intervalScores: readonly (number | null | undefined)[]): number | null {
  const v = intervalScores.filter((x): x is number => x != null && Number.isFinite(x));
  return v.length ? median(v) : null;
}

/** Strings deficit of one day, N·(1 − OI/peer median); null if undefined. */
export function deficitStrings(d: DailyResult): number | null {
  if (d.oi == null || d.peerMedianOi == null || !(d.peerMedianOi > 0)) return null;
  return d.nStrings * (1 - d.oi / d.peerMedianOi);
}

/**
 * Apply the flag rule to one combiner. `days` must be consecutive calendar days in ascending
 * order, one entry per day (a day without data has robustZ null and counts as not low).
 */
export function evaluateFlag(days: readonly DailyResult[], opts: FlagRuleOpts = {}): FlagDecision {
  const threshold = opts.threshold ?? -3.5;
  const n = opts.minLowDays ?? 3;
  const m = opts.windowDays ?? 5;
  const minDef = opts.minDeficitStrings ?? 0.5;
  const recent = days.slice(-m);
  const low = recent.filter((d) => d.robustZ != null && d.robustZ < threshold);
  const defs = low.map(deficitStrings).filter((x): x is number => x != null);
  const deficit = defs.length ? median(defs) : null;
  return {
    flagged: low.length >= n && deficit != null && deficit >= minDef,
    lowDays: low.length,
    windowDays: recent.length,
    deficitStrings: deficit,
    firstLowDay: low[0]?.day ?? null,
    lastLowDay: low[low.length - 1]?.day ?? null,
  };
}

export interface CombinerDay {
  combinerId: string;
  blockId: string;
  oi: number | null;
}

export interface BlockLossOpts {
  /** a combiner is "low" when OI < (1 − minDeficit) × the rest of the plant's median (default 3 %) */
  minDeficit?: number;
  /** share of a block's combiners that must be low together (default 0.6) */
  minLowFraction?: number;
  /** fewest combiners with data for a block to be judged (default 3) */
  minCombiners?: number;
}

/**
 * Blocks where most combiners are low together compared with the rest of the plant, on one
 * day: the signature of soiling or shading (uniform over a surface), not of open strings.
 * Returns the ids of such blocks. Needs at least two blocks.
 */
export function blockLevelLosses(day: readonly CombinerDay[], opts: BlockLossOpts = {}): Set<string> {
  const minDeficit = opts.minDeficit ?? 0.03;
  const minFrac = opts.minLowFraction ?? 0.6;
  const minN = opts.minCombiners ?? 3;
  const byBlock = new Map<string, number[]>();
  for (const c of day) {
    if (c.oi == null || !Number.isFinite(c.oi)) continue;
    const list = byBlock.get(c.blockId) ?? [];
    list.push(c.oi);
    byBlock.set(c.blockId, list);
  }
  const out = new Set<string>();
  if (byBlock.size < 2) return out;
  for (const [block, ois] of byBlock) {
    if (ois.length < minN) continue;
    const rest = [...byBlock].filter(([b]) => b !== block).flatMap(([, v]) => v);
    if (rest.length === 0) continue;
    const cut = (1 - minDeficit) * median(rest);
    const lowShare = ois.filter((x) => x < cut).length / ois.length;
    if (lowShare >= minFrac) out.add(block);
  }
  return out;
}

export type LossClass = "data_quality" | "clipping" | "block_level" | "strings_out" | "none";

export const LOSS_CLASS_LABEL: Record<LossClass, string> = {
  data_quality: "data quality: stuck, stale or missing readings",
  clipping: "inverter clipping: output limited by the inverter, not lost in the array",
  block_level: "block-level loss: soiling or shading",
  strings_out: "strings out",
  none: "no loss",
};

/**
 * What a low combiner's loss is. Precedence: bad data first (the deficit may not exist),
 * then clipping (energy never produced by design), then a block-wide loss, and only then
 * strings out. Only "strings_out" should become a strings-out flag.
 */
export function classifyLoss(p: {
  flagged: boolean;
  /** share of the window's daytime intervals removed as stale or gap */
  dataQualityShare?: number;
  /** share of the window's daytime intervals under inverter clipping */
  clippingShare?: number;
  blockLevel?: boolean;
  /** above this share the data or clipping explain the low score (default 0.5) */
  maxShare?: number;
}): LossClass {
  const maxShare = p.maxShare ?? DAY_CLASS_RULE.maxShare;
  if ((p.dataQualityShare ?? 0) > maxShare) return "data_quality";
  if ((p.clippingShare ?? 0) > maxShare) return "clipping";
  if (p.blockLevel) return "block_level";
  return p.flagged ? "strings_out" : "none";
}

/**
 * The day-class rule: a day is a strings-out day when its robust z is below −3.5 with at least half
 * a string out, and data quality or clipping explain it when they took over half the day. The
 * analysis's SQL uses the same numbers for its provisional class.
 */
export const DAY_CLASS_RULE = { robustZ: -3.5, minStringsOut: 0.5, maxShare: 0.5 } as const;

/** One combiner's stored result for a day, as the loss classes of that day need it. */
export interface ClassDayRow {
  combinerId: number;
  blockId: number | null;
  oi: number | null;
  /** the day's daytime intervals */
  total: number;
  /** intervals excluded per rule (stale, gap, out_of_range, site_excluded, clipping, …) */
  excluded: Record<string, number> | null;
  robustZ: number | null;
  stringsOut: number | null;
}

/**
 * The loss class of every combiner of one day (same order): classifyLoss with the day's
 * block-level losses (DAY_CLASS_RULE).
 */
export function dayLossClasses(list: readonly ClassDayRow[]): LossClass[] {
  const blocks = blockLevelLosses(list.map((x) => ({ combinerId: String(x.combinerId), blockId: String(x.blockId ?? 0), oi: x.oi })));
  return list.map((x) => {
    const ex = x.excluded ?? {};
    const total = Math.max(1, x.total);
    return classifyLoss({
      flagged: x.robustZ != null && x.robustZ < DAY_CLASS_RULE.robustZ && (x.stringsOut ?? 0) >= DAY_CLASS_RULE.minStringsOut,
      dataQualityShare: ((ex.stale ?? 0) + (ex.gap ?? 0) + (ex.out_of_range ?? 0) + (ex.site_excluded ?? 0)) / total,
      clippingShare: (ex.clipping ?? 0) / total,
      blockLevel: blocks.has(String(x.blockId ?? 0)),
    });
  });
}

/** One combiner-day as the flag history sees it. */
export interface HistoryDay extends DailyResult {
  /** loss class of the day (app/models/analysis.server.ts classifyDays), null when not classified */
  lossClass: LossClass | string | null;
  /** energy lost that day against the peers' median (kWh), null without peers */
  lostKwh: number | null;
}

export interface FlagRun {
  /** first low day of the deficit run (invalid days before it skipped) */
  firstDay: string;
  /** last low day seen */
  lastLowDay: string;
  /** day on which the combiner completed M valid days back within its peers; null while open */
  closedOn: string | null;
  /** the low days of the last M-valid-day window the flag stood on (for k̂ and kWh/day) */
  windowLow: HistoryDay[];
  /** Σ max(0, lost kWh) over the run's days that were not valid-and-normal */
  lostKwhToDate: number;
}

export interface HistoryOpts extends FlagRuleOpts {
  /**
   * Peers share the block (inverter or block grouping): a block-wide loss (soiling, shading)
   * lowers the peers too, so a low robust z on a block-level day is still an individual deficit.
   */
  peersWithinBlock?: boolean;
}

/**
 * The flag history of one combiner: walk its days in order with a sliding N-of-M window over
 * VALID days (a day with a robust z and trustworthy data). Days without valid data (clouds,
 * gaps, stuck sensors, clipping) neither break nor extend a deficit run. A flag is raised when
 * the rule of evaluateFlag fires (≥ N low of the last M valid days and a median deficit ≥ the
 * minimum); its first day is the first low day of that window, extended back over earlier low
 * valid days; it closes once the combiner has been back within its peers on M valid days in a
 * row. `days` must be in ascending day order (gaps allowed). Rule from DESIGN "flag rule";
 * the skip-invalid-days choice is ours (common practice: a cloudy day is no evidence either way).
 */
export function flagHistory(days: readonly HistoryDay[], opts: HistoryOpts = {}): FlagRun[] {
  const threshold = opts.threshold ?? -3.5;
  const m = opts.windowDays ?? 5;
  const isValid = (d: HistoryDay) => d.robustZ != null && d.lossClass !== "data_quality" && d.lossClass !== "clipping";
  const isLow = (d: HistoryDay) =>
    isValid(d) && d.robustZ! < threshold && (d.lossClass !== "block_level" || opts.peersWithinBlock === true);
  const runs: FlagRun[] = [];
  const valid: HistoryDay[] = [];
  let open: FlagRun | null = null;
  let normalStreak = 0;
  // all days since the last valid normal day: a new run's lost energy counts invalid days inside it
  for (const d of days) {
    if (open && !(isValid(d) && !isLow(d))) open.lostKwhToDate += Math.max(0, d.lostKwh ?? 0);
    if (!isValid(d)) continue;
    valid.push(d);
    const win = valid.slice(-m);
    // evaluateFlag counts robustZ < threshold: days that are not low here (block-level) go in as null
    const scored = win.map((x) => (isLow(x) ? x : { ...x, robustZ: null }));
    if (open) {
      if (isLow(d)) {
        normalStreak = 0;
        open.lastLowDay = d.day;
        if (evaluateFlag(scored, opts).flagged) open.windowLow = win.filter(isLow);
      } else if (++normalStreak >= m) {
        open.closedOn = d.day;
        open = null;
        normalStreak = 0;
      }
      continue;
    }
    if (!isLow(d)) continue;
    if (!evaluateFlag(scored, opts).flagged) continue;
    // first day: the window's first low day, then back over earlier low valid days
    let i = valid.length - win.length + win.findIndex(isLow);
    while (i > 0 && isLow(valid[i - 1]!)) i--;
    const first = valid[i]!.day;
    const run: FlagRun = { firstDay: first, lastLowDay: d.day, closedOn: null, windowLow: win.filter(isLow), lostKwhToDate: 0 };
    for (const x of days) if (x.day >= first && x.day <= d.day && !(isValid(x) && !isLow(x))) run.lostKwhToDate += Math.max(0, x.lostKwh ?? 0);
    runs.push(run);
    open = run;
    normalStreak = 0;
  }
  return runs;
}
