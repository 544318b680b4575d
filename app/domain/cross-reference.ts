/**
 * Cross-reference: tie each flag (a combiner's persistent strings-out deficit) to the infrared
 * findings on that combiner's strings, and say how much of the measured deficit they explain.
 *
 *   explained fraction = Σ expected loss of the matched findings ÷ measured deficit
 *
 * Expected loss of a finding = its class's effect in strings × the flag's measured loss per
 * missing string (lost kWh/day ÷ strings out), so a "string offline" finding on a one-string
 * flag explains it fully. At or above the threshold (default 0.7) the flag is `explained`,
 * otherwise it `needs flight`. Only flags in `new`, `explained` or `needs flight` are moved;
 * people's decisions (in field, verifying, recovered, dismissed) are never overridden.
 */
import { anomalyClass, effectInStrings, effectiveRule, type AnomalyRule } from "./anomaly-classes";

export const AUTO_STATES = ["new", "explained", "needs flight"] as const;
export type AutoState = (typeof AUTO_STATES)[number];

export interface XrefFlag {
  id: string;
  combinerId: number;
  combinerName: string;
  state: string;
  stringsOut: number;
  lostKwhPerDay: number;
  /** YYYY-MM-DD */
  firstDay: string;
  lastDay: string;
}

export interface XrefFinding {
  id: string;
  combinerId: number;
  combinerName: string;
  stringNumber: number;
  classKey: string;
  /** YYYY-MM-DD, local day of the flight */
  flownOn: string;
  modulesPerString: number;
}

export interface XrefOptions {
  threshold: number;
  windowDays: number;
  rules?: ReadonlyMap<string, AnomalyRule>;
  /** kWh/day of one healthy string, for findings without a flag (a planning estimate). */
  stringKwhPerDay: number;
}

export interface MatchedFinding {
  findingId: string;
  stringNumber: number;
  classKey: string;
  effectStrings: number;
  expectedKwhPerDay: number;
}

export interface FlagResult {
  flagId: string;
  matched: MatchedFinding[];
  expectedKwhPerDay: number;
  explainedFraction: number;
  /** The state the flag should have, or null to leave it alone. */
  nextState: "explained" | "needs flight" | null;
  /** The strings to check, narrowed from the combiner by the matched findings. */
  stringsToCheck: number[];
  advice: string;
}

export interface XrefResult {
  flags: FlagResult[];
  /** Findings on combiners without an open flag: small losses, listed for the record. */
  unflagged: { findingId: string; effectStrings: number; expectedKwhPerDay: number }[];
}

function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}

/** String numbers as short ranges: [1,2,3,5,7,8] → "1–3, 5, 7–8". */
export function compactNumbers(ns: readonly number[]): string {
  const s = [...new Set(ns)].sort((a, b) => a - b);
  const parts: string[] = [];
  for (let i = 0; i < s.length; ) {
    let j = i;
    while (j + 1 < s.length && s[j + 1] === s[j]! + 1) j++;
    parts.push(j > i ? `${s[i]}–${s[j]}` : String(s[i]));
    i = j + 1;
  }
  return parts.join(", ");
}

export function isAutoState(s: string): s is AutoState {
  return (AUTO_STATES as readonly string[]).includes(s);
}

/** What to tell the field for one flag: connections first when a whole string is out or a connector is hot (common practice [P]). */
export function adviceFor(flag: Pick<XrefFlag, "combinerName" | "stringsOut">, matched: readonly Pick<MatchedFinding, "stringNumber" | "classKey">[]): string {
  const first = [...new Set(matched.filter((m) => anomalyClass(m.classKey)?.checkConnectionsFirst).map((m) => m.stringNumber))].sort((a, b) => a - b);
  const others = [...new Set(matched.map((m) => m.stringNumber))].filter((n) => !first.includes(n)).sort((a, b) => a - b);
  const list = (ns: number[]) => (ns.length === 1 ? `string ${ns[0]}` : `strings ${ns.slice(0, -1).join(", ")} and ${ns[ns.length - 1]}`);
  const parts: string[] = [];
  if (first.length) parts.push(`Check connectors, fuse and cable of ${flag.combinerName} ${list(first)} first.`);
  if (others.length) parts.push(`Inspect the modules of ${flag.combinerName} ${list(others)}.`);
  if (!matched.length) parts.push(`No finding yet: fly ${flag.combinerName} (${flag.stringsOut} string${flag.stringsOut === 1 ? "" : "s"} out) or measure its string currents.`);
  return parts.join(" ");
}

export function crossReference(flagsIn: readonly XrefFlag[], findingsIn: readonly XrefFinding[], o: XrefOptions): XrefResult {
  const byCombiner = new Map<number, XrefFinding[]>();
  for (const f of findingsIn) byCombiner.set(f.combinerId, [...(byCombiner.get(f.combinerId) ?? []), f]);
  const used = new Set<string>();
  const flags: FlagResult[] = [];
  for (const flag of flagsIn) {
    const from = addDays(flag.firstDay, -o.windowDays);
    const to = addDays(flag.lastDay, o.windowDays);
    const perString = flag.stringsOut > 0 ? flag.lostKwhPerDay / flag.stringsOut : 0;
    // Several findings on one string do not add up beyond that string: keep the largest per string.
    const bestPerString = new Map<number, MatchedFinding>();
    const matchedAll: MatchedFinding[] = [];
    for (const f of byCombiner.get(flag.combinerId) ?? []) {
      if (f.flownOn < from || f.flownOn > to) continue;
      used.add(f.id);
      const eff = effectInStrings(effectiveRule(f.classKey, o.rules), f.modulesPerString);
      const m: MatchedFinding = { findingId: f.id, stringNumber: f.stringNumber, classKey: f.classKey, effectStrings: eff, expectedKwhPerDay: eff * perString };
      matchedAll.push(m);
      const cur = bestPerString.get(f.stringNumber);
      if (!cur || m.effectStrings > cur.effectStrings) bestPerString.set(f.stringNumber, m);
    }
    const expected = [...bestPerString.values()].reduce((s, m) => s + m.expectedKwhPerDay, 0);
    const fraction = flag.lostKwhPerDay > 0 ? expected / flag.lostKwhPerDay : 0;
    const nextState = isAutoState(flag.state) ? (fraction >= o.threshold ? "explained" : "needs flight") : null;
    const stringsToCheck = [...bestPerString.values()].sort((a, b) => b.effectStrings - a.effectStrings || a.stringNumber - b.stringNumber).map((m) => m.stringNumber);
    flags.push({
      flagId: flag.id,
      matched: matchedAll,
      expectedKwhPerDay: expected,
      explainedFraction: fraction,
      nextState,
      stringsToCheck,
      advice: adviceFor(flag, matchedAll),
    });
  }
  const unflagged = findingsIn
    .filter((f) => !used.has(f.id))
    .map((f) => {
      const eff = effectInStrings(effectiveRule(f.classKey, o.rules), f.modulesPerString);
      return { findingId: f.id, effectStrings: eff, expectedKwhPerDay: eff * o.stringKwhPerDay };
    });
  return { flags, unflagged };
}

/**
 * Daily energy of one healthy string, for losses without a measured deficit: modules × Pmp ×
 * clear-sky POA insolation (kWh/m² ÷ 1 kW/m²) × a performance ratio of 0.8 (common practice [P]).
 */
export function stringKwhPerDayEstimate(modules: number, pmpW: number, poaInsolationKwhM2: number, performanceRatio = 0.8): number {
  return (modules * pmpW * poaInsolationKwhM2 * performanceRatio) / 1000;
}
