/**
 * Recovery after a repair: the combiner's output relative to its peers over N clean days
 * before the fix vs N clean days after, in strings, kWh/day and money per year.
 * Inputs are daily relative output indices (OI ÷ peer median OI), so a sunnier week after
 * the fix does not count as recovery.
 */
import { median } from "./outliers";

export interface RecoveryInput {
  /** daily relative OI before the fix, oldest first; nulls (unclean days) are skipped */
  before: readonly (number | null)[];
  /** daily relative OI after the fix, oldest first */
  after: readonly (number | null)[];
  nStrings: number;
  /** the combiner's peer-expected energy per day at relative OI 1, kWh */
  expectedDailyKwh: number;
  /** currency per MWh */
  tariffPerMwh: number;
  /** clean days used on each side (default 5): the last N before, the first N after */
  days?: number;
}

export interface RecoveryResult {
  beforeOi: number | null;
  afterOi: number | null;
  deltaOi: number | null;
  /** whole strings brought back, round(N·ΔOI) */
  recoveredStrings: number | null;
  recoveredKwhPerDay: number | null;
  annualKwh: number | null;
  annualValue: number | null;
  /** both sides have N clean days */
  complete: boolean;
}

const clean = (xs: readonly (number | null)[]) => xs.filter((x): x is number => x != null && Number.isFinite(x));

export function recovery(p: RecoveryInput): RecoveryResult {
  const n = p.days ?? 5;
  const b = clean(p.before).slice(-n);
  const a = clean(p.after).slice(0, n);
  const beforeOi = b.length ? median(b) : null;
  const afterOi = a.length ? median(a) : null;
  if (beforeOi == null || afterOi == null) {
    return { beforeOi, afterOi, deltaOi: null, recoveredStrings: null, recoveredKwhPerDay: null, annualKwh: null, annualValue: null, complete: false };
  }
  const deltaOi = afterOi - beforeOi;
  const recoveredKwhPerDay = deltaOi * p.expectedDailyKwh;
  const annualKwh = recoveredKwhPerDay * 365;
  return {
    beforeOi,
    afterOi,
    deltaOi,
    recoveredStrings: Math.round(p.nStrings * deltaOi) || 0,
    recoveredKwhPerDay,
    annualKwh,
    annualValue: (annualKwh / 1000) * p.tariffPerMwh,
    complete: b.length >= n && a.length >= n,
  };
}
