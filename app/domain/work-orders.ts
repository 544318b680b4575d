/**
 * The work-order state machine: which moves exist, and who may make each. Pure; the model
 * (app/models/work-orders.server.ts) enforces it, the screens read it to show buttons.
 *
 *   open ──assign──▶ assigned ──start──▶ in progress ──close──▶ done
 *    ▲  ◀─unassign──    │  ◀──pause────      │
 *    └──reopen── cancelled ◀───────cancel────┴── (from open, assigned, in progress)
 */
import type { Role } from "~/permissions";

export type WorkOrderState = "open" | "assigned" | "in progress" | "done" | "cancelled";

export type Actor =
  /** admin or O&M lead: plans, assigns, cancels */
  | "manager"
  /** the technician the order is assigned to */
  | "assignee";

export interface Transition {
  from: WorkOrderState;
  to: WorkOrderState;
  action: "assign" | "unassign" | "start" | "pause" | "close" | "cancel" | "reopen";
  label: string;
  by: readonly Actor[];
}

export const TRANSITIONS: readonly Transition[] = [
  { from: "open", to: "assigned", action: "assign", label: "Assign", by: ["manager"] },
  { from: "assigned", to: "open", action: "unassign", label: "Unassign", by: ["manager"] },
  { from: "assigned", to: "in progress", action: "start", label: "Start work", by: ["assignee", "manager"] },
  { from: "in progress", to: "assigned", action: "pause", label: "Put back (not started)", by: ["assignee", "manager"] },
  // A technician who forgot to press "start" can still close from the field.
  { from: "assigned", to: "done", action: "close", label: "Close as done", by: ["assignee", "manager"] },
  { from: "in progress", to: "done", action: "close", label: "Close as done", by: ["assignee", "manager"] },
  { from: "open", to: "cancelled", action: "cancel", label: "Cancel", by: ["manager"] },
  { from: "assigned", to: "cancelled", action: "cancel", label: "Cancel", by: ["manager"] },
  { from: "in progress", to: "cancelled", action: "cancel", label: "Cancel", by: ["manager"] },
  { from: "cancelled", to: "open", action: "reopen", label: "Reopen", by: ["manager"] },
];

/** The actors a person is for one work order: managers by role; the assignee by being named on it. */
export function actorsFor(p: { roles: readonly Role[]; userId: string }, wo: { assigneeId: string | null }): Actor[] {
  const out: Actor[] = [];
  if (p.roles.some((r) => r === "admin" || r === "lead")) out.push("manager");
  // A lead may also be assigned; a technician acts only on their own orders.
  if (wo.assigneeId && wo.assigneeId === p.userId && p.roles.some((r) => r === "technician" || r === "lead")) out.push("assignee");
  return out;
}

export function allowedTransitions(state: WorkOrderState, actors: readonly Actor[]): Transition[] {
  return TRANSITIONS.filter((t) => t.from === state && t.by.some((a) => actors.includes(a)));
}

export function findTransition(from: WorkOrderState, to: WorkOrderState, actors: readonly Actor[]): Transition | null {
  return allowedTransitions(from, actors).find((t) => t.to === to) ?? null;
}

export function isFinal(state: WorkOrderState): boolean {
  return state === "done";
}

export function isActive(state: WorkOrderState): boolean {
  return state === "open" || state === "assigned" || state === "in progress";
}

export function formatNumber(n: number): string {
  return `WO-${String(n).padStart(4, "0")}`;
}

/**
 * The prefilled "what to check". A whole string that is out is far more often a connector, fuse
 * or cable than many failed modules at once, so those come first (common practice of the trade).
 */
export function whatToCheck(p: { combiner: string | null; strings: readonly number[]; anomaly?: string | null; block?: string | null }): string {
  const s = [...p.strings].sort((a, b) => a - b);
  const where = p.combiner
    ? s.length === 0
      ? `combiner ${p.combiner}`
      : `${s.length === 1 ? "string" : "strings"} ${joinList(s.map(String))} on combiner ${p.combiner}`
    : p.block
      ? `block ${p.block}`
      : "the site";
  if (p.anomaly && /hot cell|hot spot|diode|glass|soiling|shading|vegetation/i.test(p.anomaly))
    return `Inspect ${where}: the drone saw "${p.anomaly}". Check the modules named in the finding and the string's connectors.`;
  if (!p.combiner) return `Inspect ${where}.`;
  if (s.length === 0) return `Check the fuses, connectors and cables of ${where}: measure each string's current to find the ones that are out.`;
  return `Check connectors, fuse and cable of ${where}${p.anomaly ? ` (drone finding: ${p.anomaly})` : ""}. Measure the string current before and after.`;
}

function joinList(xs: readonly string[]): string {
  if (xs.length <= 1) return xs.join("");
  return `${xs.slice(0, -1).join(", ")} and ${xs[xs.length - 1]}`;
}

/** Local calendar day (YYYY-MM-DD) of an instant in a time zone. */
export function localDay(at: Date, timeZone: string): string {
  return new Intl.DateTimeFormat("en-CA", { timeZone, year: "numeric", month: "2-digit", day: "2-digit" }).format(at);
}

export function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}

/** How a due date reads today: overdue, due soon (today or tomorrow), or later. */
export function dueStatus(dueOn: string | null, today: string, state: WorkOrderState): "overdue" | "due soon" | "later" | null {
  if (!dueOn || !isActive(state)) return null;
  if (dueOn < today) return "overdue";
  if (dueOn <= addDays(today, 1)) return "due soon";
  return "later";
}

/** One combiner day as the recovery check reads it. */
export interface RecoveryDay {
  day: string;
  oi: number | null;
  peer: number | null;
  lostKwh: number | null;
  lossClass: string | null;
  valid: number;
  total: number;
}

/**
 * A day counts for the before/after comparison when it has a peer comparison, is not set aside
 * as data quality, clipping or a block-wide loss, and at least 25 % of its daylight intervals
 * were valid (daily completeness of the NREL PV Fleets QA pipeline).
 */
export function isCleanDay(d: RecoveryDay): boolean {
  if (d.oi == null || d.peer == null || !(d.peer > 0) || !Number.isFinite(d.oi)) return false;
  if (d.lossClass === "data_quality" || d.lossClass === "clipping" || d.lossClass === "block_level") return false;
  return d.valid > 0 && d.valid >= 0.25 * d.total;
}

export function relativeOi(d: RecoveryDay): number | null {
  return isCleanDay(d) ? d.oi! / d.peer! : null;
}

/**
 * The combiner's peer-expected energy per day at relative OI 1, from the days with a deficit:
 * lost = expected·(1 − r), so expected = lost ÷ (1 − r). Only days at least half a string down
 * are used (a small 1 − r would blow the ratio up); median of them, or null.
 */
export function expectedDailyKwh(days: readonly RecoveryDay[], nStrings: number): number | null {
  const est: number[] = [];
  for (const d of days) {
    const r = relativeOi(d);
    if (r == null || d.lostKwh == null || !(d.lostKwh > 0)) continue;
    if (nStrings * (1 - r) < 0.5) continue;
    est.push(d.lostKwh / (1 - r));
  }
  if (!est.length) return null;
  est.sort((a, b) => a - b);
  const m = est.length >> 1;
  return est.length % 2 ? est[m]! : (est[m - 1]! + est[m]!) / 2;
}

export interface Verdict {
  status: "verifying" | "recovered" | "not recovered";
  /** where the linked flag goes; null = leave it */
  flagState: "verifying" | "recovered" | "new" | "needs flight" | null;
  message: string;
}

const pct = (x: number) => `${(x * 100).toFixed(1)} %`;
const strings = (k: number) => `${k} string${k === 1 ? "" : "s"}`;

/**
 * What the data says after a repair, in plain words. Recovered = the combiner is back within
 * `minDeficitStrings` (default half a string) of its peers and at least one string came back.
 */
export function recoveryVerdict(p: {
  beforeOi: number | null;
  afterOi: number | null;
  beforeDays: number;
  afterDays: number;
  windowDays: number;
  nStrings: number;
  recoveredStrings: number | null;
  kwhPerDay: number | null;
  annualValue: number | null;
  currency: string;
  resolution: string | null;
  minDeficitStrings?: number;
}): Verdict {
  const min = p.minDeficitStrings ?? 0.5;
  if (p.afterDays < p.windowDays || p.beforeDays < p.windowDays || p.beforeOi == null || p.afterOi == null) {
    return {
      status: "verifying",
      flagState: "verifying",
      message: `Waiting for data: ${Math.min(p.afterDays, p.windowDays)} of ${p.windowDays} clean days after the repair, ${Math.min(p.beforeDays, p.windowDays)} of ${p.windowDays} before.`,
    };
  }
  const remaining = p.nStrings * (1 - p.afterOi);
  const back = p.recoveredStrings ?? 0;
  const money = p.annualValue != null ? ` (about ${Math.round(p.annualValue).toLocaleString("en")} ${p.currency} a year)` : "";
  const gain = p.kwhPerDay != null ? `, +${p.kwhPerDay.toFixed(1)} kWh/day${money}` : "";
  if (remaining < min) {
    if (back >= 1)
      return {
        status: "recovered",
        flagState: "recovered",
        message: `Recovered: ${strings(back)} back. The combiner went from ${pct(p.beforeOi)} to ${pct(p.afterOi)} of its peers${gain}.`,
      };
    return {
      status: "not recovered",
      flagState: "recovered",
      message: `Nothing to recover: the combiner was already at ${pct(p.beforeOi)} of its peers before the repair and is at ${pct(p.afterOi)} after.`,
    };
  }
  const still = Math.max(1, Math.round(remaining));
  if (back >= 1)
    return {
      status: "not recovered",
      flagState: "new",
      message: `Partly recovered: ${strings(back)} came back, but the combiner is still about ${strings(still)} below its peers (${pct(p.afterOi)}). Another fault remains: triage the flag again.`,
    };
  return {
    status: "not recovered",
    flagState: p.resolution === "nothing found" ? "needs flight" : "new",
    message:
      `Not recovered: ${p.windowDays} clean days after the repair the combiner is still about ${strings(still)} below its peers (${pct(p.afterOi)}, was ${pct(p.beforeOi)}). ` +
      (p.resolution === "nothing found" ? "Nothing was found on site, so the flag goes back to needing a drone flight." : "The fault is elsewhere or came back: the flag goes back to triage."),
  };
}
