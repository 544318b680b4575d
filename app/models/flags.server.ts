/**
 * Flags: the persistent strings-out deficits of combiners, raised by the analysis from
 * combiner_days with the domain's flag rule, and moved between states by people.
 */
import { and, asc, desc, eq, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { blocks, combinerDays, devices, flagEvents, flags, FLAG_STATES, sites, type FlagState } from "~/db/schema";
import { classifyLoss, evaluateFlag, type DailyResult, type LossClass } from "~/domain/flags";
import { estimateStringsOut } from "~/domain/strings-out";
import type { SiteSettings } from "~/domain/site-settings";

function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}

interface DayRow {
  combinerId: number;
  day: string;
  oi: number | null;
  peer: number | null;
  rz: number | null;
  lost: number | null;
  lossClass: string | null;
  n: number;
}

/**
 * Evaluate the flag rule for every combiner of the site on the last M days with results, and
 * upsert: one open flag per combiner; new flags start `new`; a dismissed flag stays dismissed
 * (its figures keep updating); a combiner no longer low has its flag closed (open = false).
 */
export async function updateFlags(siteId: string): Promise<{ open: number; created: number; closed: number }> {
  const [site] = await db().select().from(sites).where(eq(sites.id, siteId)).limit(1);
  if (!site) throw new Error("No such site");
  const th = site.settings.thresholds;
  const rows: DayRow[] = (
    await db().execute<{ combiner_id: number; day: string; oi: number | null; peer: number | null; rz: number | null; lost: number | null; loss_class: string | null; n: number }>(
      sql`select cd.combiner_id, cd.day::text as day, cd.output_index oi, cd.peer_median_oi peer, cd.robust_z rz, cd.lost_kwh lost, cd.loss_class, d.string_count n
            from combiner_days cd join devices d on d.id = cd.combiner_id where cd.site_id = ${siteId} order by cd.combiner_id, cd.day`,
    )
  ).rows.map((r) => ({ combinerId: r.combiner_id, day: r.day, oi: r.oi, peer: r.peer, rz: r.rz, lost: r.lost, lossClass: r.loss_class, n: r.n }));
  if (!rows.length) return { open: 0, created: 0, closed: 0 };
  const lastDay = rows.reduce((m, r) => (r.day > m ? r.day : m), rows[0]!.day);
  const firstWindowDay = addDays(lastDay, -(th.flagDaysM - 1));
  const byCombiner = new Map<number, DayRow[]>();
  for (const r of rows) byCombiner.set(r.combinerId, [...(byCombiner.get(r.combinerId) ?? []), r]);

  const existing = await db().select().from(flags).where(and(eq(flags.siteId, siteId), eq(flags.open, true)));
  const openByCombiner = new Map(existing.map((f) => [f.combinerId, f]));
  let created = 0;
  let closed = 0;
  let open = 0;
  const isLow = (r: DayRow) => r.rz != null && r.rz < th.robustZ;

  for (const [combinerId, list] of byCombiner) {
    const byDay = new Map(list.map((r) => [r.day, r]));
    const window: DayRow[] = [];
    for (let d = firstWindowDay; d <= lastDay; d = addDays(d, 1))
      window.push(byDay.get(d) ?? { combinerId, day: d, oi: null, peer: null, rz: null, lost: null, lossClass: null, n: list[0]!.n });
    const daily: DailyResult[] = window.map((r) => ({ day: r.day, robustZ: r.rz, oi: r.oi, peerMedianOi: r.peer, nStrings: r.n }));
    const decision = evaluateFlag(daily, {
      threshold: th.robustZ,
      minLowDays: th.flagDaysN,
      windowDays: th.flagDaysM,
      minDeficitStrings: th.minDeficitStrings,
    });
    const low = window.filter(isLow);
    // Loss class over the window: a block-wide, clipping or data-quality day is not a string signal.
    const classes = window.map((r) => r.lossClass).filter((x): x is string => !!x);
    const share = (k: LossClass) => (classes.length ? classes.filter((x) => x === k).length / classes.length : 0);
    const cls = classifyLoss({
      flagged: decision.flagged,
      dataQualityShare: share("data_quality"),
      clippingShare: share("clipping"),
      blockLevel: low.length > 0 && low.filter((r) => r.lossClass === "block_level").length / low.length > 0.5,
    });
    const current = openByCombiner.get(combinerId);
    if (cls !== "strings_out") {
      if (current) {
        await db().update(flags).set({ open: false, updatedAt: new Date() }).where(eq(flags.id, current.id));
        closed++;
      }
      continue;
    }
    const oi = median(low.map((r) => r.oi!));
    const peer = median(low.map((r) => r.peer!));
    const est = estimateStringsOut({ oi, peerMedianOi: peer, nStrings: list[0]!.n });
    if (!est || est.k < 1) continue;
    // First day: walk back from the first low day of the window over earlier low days (a day
    // without results does not break the run).
    let first = decision.firstLowDay!;
    for (let d = addDays(first, -1); ; d = addDays(d, -1)) {
      const r = byDay.get(d);
      if (!r) {
        if (d < list[0]!.day) break;
        continue;
      }
      if (!isLow(r)) break;
      first = d;
    }
    if (current && current.firstDay < first) first = current.firstDay;
    const lostPerDay = mean(low.map((r) => r.lost ?? 0));
    const toDate = list.filter((r) => r.day >= first && r.day <= lastDay && isLow(r)).reduce((s, r) => s + Math.max(0, r.lost ?? 0), 0);
    const values = {
      firstDay: first,
      lastDay: decision.lastLowDay!,
      stringsOut: est.k,
      confidence: Math.round(est.confidence * 100) / 100,
      lostKwhPerDay: Math.max(0, lostPerDay),
      lostKwhToDate: toDate,
      updatedAt: new Date(),
    };
    open++;
    if (current) {
      await db().update(flags).set(values).where(eq(flags.id, current.id));
    } else {
      const [f] = await db().insert(flags).values({ siteId, combinerId, state: "new", open: true, ...values }).returning({ id: flags.id });
      await db().insert(flagEvents).values({ flagId: f!.id, fromState: null, toState: "new", reason: "raised by the analysis" });
      created++;
    }
  }
  return { open, created, closed };
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}
function mean(v: number[]): number {
  return v.length ? v.reduce((a, b) => a + b, 0) / v.length : 0;
}

export const FLAG_SORTS = ["lost", "since", "strings", "combiner", "state", "confidence", "todate"] as const;
export type FlagSort = (typeof FLAG_SORTS)[number];

export interface FlagQuery {
  state?: FlagState | "open" | "all";
  q?: string;
  sort?: FlagSort;
  dir?: "asc" | "desc";
  page?: number;
  pageSize?: number;
}

export interface FlagListItem {
  id: string;
  combinerId: number;
  combiner: string;
  block: string | null;
  stringCount: number | null;
  stringsOut: number;
  confidence: number;
  lostKwhPerDay: number;
  lostKwhToDate: number;
  firstDay: string;
  lastDay: string;
  state: FlagState;
  open: boolean;
  stateReason: string | null;
}

/** Flags of a site (the caller checked the site through requireSite / requireTokenSite). */
export async function listFlags(siteId: string, q: FlagQuery = {}): Promise<{ items: FlagListItem[]; total: number; page: number; pageSize: number }> {
  const pageSize = Math.min(500, Math.max(1, q.pageSize ?? 25));
  const page = Math.max(1, q.page ?? 1);
  const conds = [eq(flags.siteId, siteId)];
  if (!q.state || q.state === "open") conds.push(eq(flags.open, true));
  else if (q.state !== "all") conds.push(eq(flags.state, q.state));
  if (q.q) conds.push(sql`(${devices.name} ilike ${"%" + q.q + "%"} or ${blocks.name} ilike ${"%" + q.q + "%"})`);
  const col = {
    lost: flags.lostKwhPerDay,
    since: flags.firstDay,
    strings: flags.stringsOut,
    combiner: devices.name,
    state: flags.state,
    confidence: flags.confidence,
    todate: flags.lostKwhToDate,
  }[q.sort ?? "lost"];
  const order = (q.dir ?? (q.sort === "combiner" || q.sort === "since" ? "asc" : "desc")) === "asc" ? asc(col) : desc(col);
  const where = and(...conds);
  const base = db()
    .select({
      id: flags.id,
      combinerId: flags.combinerId,
      combiner: devices.name,
      block: blocks.name,
      stringCount: devices.stringCount,
      stringsOut: flags.stringsOut,
      confidence: flags.confidence,
      lostKwhPerDay: flags.lostKwhPerDay,
      lostKwhToDate: flags.lostKwhToDate,
      firstDay: flags.firstDay,
      lastDay: flags.lastDay,
      state: flags.state,
      open: flags.open,
      stateReason: flags.stateReason,
    })
    .from(flags)
    .innerJoin(devices, eq(devices.id, flags.combinerId))
    .leftJoin(blocks, eq(blocks.id, devices.blockId))
    .where(where);
  const [items, [count]] = await Promise.all([
    base.orderBy(order, asc(devices.name)).limit(pageSize).offset((page - 1) * pageSize),
    db()
      .select({ n: sql<number>`count(*)::int` })
      .from(flags)
      .innerJoin(devices, eq(devices.id, flags.combinerId))
      .leftJoin(blocks, eq(blocks.id, devices.blockId))
      .where(where),
  ]);
  return { items, total: count?.n ?? 0, page, pageSize };
}

export async function flagCounts(siteId: string): Promise<Record<string, number>> {
  const r = await db()
    .select({ state: flags.state, n: sql<number>`count(*)::int` })
    .from(flags)
    .where(and(eq(flags.siteId, siteId), eq(flags.open, true)))
    .groupBy(flags.state);
  return Object.fromEntries(r.map((x) => [x.state, x.n]));
}

/** States a person may set here; later features move flags through the rest. */
export const SETTABLE_STATES = ["new", "dismissed"] as const satisfies readonly FlagState[];

export async function setFlagState(
  principal: { userId: string; orgId: string },
  siteId: string,
  flagId: string,
  toState: FlagState,
  reason: string,
): Promise<{ ok: true } | { ok: false; error: string }> {
  if (!(FLAG_STATES as readonly string[]).includes(toState)) return { ok: false, error: "Unknown state" };
  const [f] = await db().select().from(flags).where(and(eq(flags.id, flagId), eq(flags.siteId, siteId))).limit(1);
  if (!f) return { ok: false, error: "No such flag on this site" };
  if (f.state === toState) return { ok: true };
  await db().transaction(async (tx) => {
    await tx.update(flags).set({ state: toState, stateReason: reason || null, updatedAt: new Date() }).where(eq(flags.id, f.id));
    await tx.insert(flagEvents).values({ flagId: f.id, fromState: f.state, toState, reason: reason || null, userId: principal.userId });
  });
  return { ok: true };
}

export async function flagHistory(combinerId: number) {
  return db()
    .select({ id: flagEvents.id, flagId: flagEvents.flagId, fromState: flagEvents.fromState, toState: flagEvents.toState, reason: flagEvents.reason, at: flagEvents.at })
    .from(flagEvents)
    .innerJoin(flags, eq(flags.id, flagEvents.flagId))
    .where(eq(flags.combinerId, combinerId))
    .orderBy(desc(flagEvents.at), desc(flagEvents.id));
}

export async function combinerFlags(combinerId: number) {
  return db().select().from(flags).where(eq(flags.combinerId, combinerId)).orderBy(desc(flags.open), desc(flags.lastDay));
}

export function moneyPerDay(kwh: number, settings: SiteSettings): number {
  return (kwh / 1000) * settings.tariffPerMwh;
}

/** CSV text with formula injection neutralised: the one shared writer. */
export { toCsv } from "~/lib/csv-safe";

export { combinerDays };
