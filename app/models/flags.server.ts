/**
 * Flags: the persistent strings-out deficits of combiners, raised by the analysis from
 * combiner_days with the domain's flag rule, and moved between states by people.
 */
import { and, asc, desc, eq, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { blocks, combinerDays, devices, flagEvents, flags, FLAG_STATES, sites, type FlagState } from "~/db/schema";
import { flagHistory as walkFlagHistory, type HistoryDay } from "~/domain/flags";
import { estimateStringsOut } from "~/domain/strings-out";
import type { SiteSettings } from "~/domain/site-settings";

function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}

/**
 * Walk every combiner's days in order (app/domain/flags.ts flagHistory) and upsert one flag per
 * deficit run: new runs start `new`; the figures of existing flags keep updating while their
 * state stays whatever people, the cross-reference (findings.server.ts) and the work-order and
 * recovery flow (work-orders.server.ts, recovery.server.ts) made it; a run whose combiner has
 * been back within its peers for M valid days is closed (open = false, state kept).
 *
 * Incremental runs (an import's days from `fromDay`) replay from a few windows before it, or
 * from the first day of a flag still running then, so a run is always rebuilt from its start.
 */
export async function updateFlags(siteId: string, opts: { fromDay?: string } = {}): Promise<{ open: number; created: number; closed: number }> {
  const [site] = await db().select().from(sites).where(eq(sites.id, siteId)).limit(1);
  if (!site) throw new Error("No such site");
  const th = site.settings.thresholds;
  const m = th.flagDaysM;
  const existing = await db().select().from(flags).where(eq(flags.siteId, siteId));
  const byCombinerFlags = new Map<number, (typeof existing)[number][]>();
  for (const f of existing) byCombinerFlags.set(f.combinerId, [...(byCombinerFlags.get(f.combinerId) ?? []), f]);

  // Where each combiner's replay starts: a few windows back, or the start of a run still going then.
  const replayDays = Math.max(30, 6 * m);
  const r0 = opts.fromDay ? addDays(opts.fromDay, -replayDays) : null;
  const startOf = (combinerId: number): string | null => {
    if (!r0) return null;
    let start = r0;
    for (const f of byCombinerFlags.get(combinerId) ?? []) if ((f.open || f.lastDay >= addDays(r0, -replayDays)) && f.firstDay < start) start = f.firstDay;
    return start;
  };
  let from: string | null = null;
  if (r0) {
    from = r0;
    for (const f of existing) if ((f.open || f.lastDay >= addDays(r0, -replayDays)) && f.firstDay < from) from = f.firstDay;
  }
  // Only combiners that can have a run: a day below the threshold since `from` (a run starts on
  // such a day, app/domain/flags.ts), or a stored flag to update or close.
  const withFlags = [...byCombinerFlags.keys()];
  const since = from ? sql`and day >= ${from}` : sql``;
  const rows = (
    await db().execute<{ combiner_id: number; day: string; oi: number | null; peer: number | null; rz: number | null; lost: number | null; loss_class: string | null; n: number }>(
      sql`select cd.combiner_id, cd.day::text as day, cd.output_index oi, cd.peer_median_oi peer, cd.robust_z rz, cd.lost_kwh lost, cd.loss_class, d.string_count n
            from combiner_days cd join devices d on d.id = cd.combiner_id
           where cd.site_id = ${siteId} ${from ? sql`and cd.day >= ${from}` : sql``}
             and (cd.combiner_id in (select combiner_id from combiner_days where site_id = ${siteId} ${since} and robust_z < ${th.robustZ})
                  or cd.combiner_id = any(${sql.param(withFlags)}::int[]))
           order by cd.combiner_id, cd.day`,
    )
  ).rows;
  if (!rows.length) return { open: 0, created: 0, closed: 0 };
  // The site's latest analysed day (every combiner has a row per analysed day, kept or not here).
  const [latest] = (await db().execute<{ day: string }>(sql`select max(day)::text as day from combiner_days where site_id = ${siteId}`)).rows;
  const lastDay = latest?.day ?? rows[rows.length - 1]!.day;
  const byCombiner = new Map<number, HistoryDay[]>();
  for (const r of rows) {
    const list = byCombiner.get(r.combiner_id) ?? [];
    list.push({ day: r.day, robustZ: r.rz, oi: r.oi, peerMedianOi: r.peer, nStrings: r.n, lossClass: r.loss_class, lostKwh: r.lost });
    byCombiner.set(r.combiner_id, list);
  }

  let created = 0;
  let closed = 0;
  let open = 0;
  const ruleOpts = {
    threshold: th.robustZ,
    minLowDays: th.flagDaysN,
    windowDays: m,
    minDeficitStrings: th.minDeficitStrings,
    peersWithinBlock: th.peerGroup === "inverter" || th.peerGroup === "block",
  };
  // All flag writes of the run in one transaction: one commit (and WAL flush) instead of one per flag,
  // and the flags table moves from one run's view to the next at once.
  await db().transaction(async (tx) => {
    for (const [combinerId, all] of byCombiner) {
      const start = startOf(combinerId);
      const list = start ? all.filter((d) => d.day >= start) : all;
      const runs = walkFlagHistory(list, ruleOpts);
      const mine = (byCombinerFlags.get(combinerId) ?? []).filter((f) => !start || f.firstDay >= start || f.open);
      const matched = new Set<string>();
      for (const run of runs) {
        const low = run.windowLow;
        const est = estimateStringsOut({ oi: median(low.map((r) => r.oi!)), peerMedianOi: median(low.map((r) => r.peerMedianOi!)), nStrings: low[0]?.nStrings ?? 0 });
        if (!est || est.k < 1) continue;
        const runEnd = run.closedOn ?? lastDay;
        // the stored flag of this run: the one whose days overlap it (latest first)
        const current = mine
          .filter((f) => !matched.has(f.id) && f.firstDay <= runEnd && (f.open || f.lastDay >= run.firstDay))
          .sort((a, b) => (a.firstDay < b.firstDay ? 1 : -1))[0];
        const values = {
          firstDay: run.firstDay,
          lastDay: run.lastLowDay,
          stringsOut: est.k,
          confidence: Math.round(est.confidence * 100) / 100,
          lostKwhPerDay: Math.max(0, mean(low.map((r) => r.lostKwh ?? 0))),
          lostKwhToDate: run.lostKwhToDate,
          open: run.closedOn == null,
          updatedAt: new Date(),
        };
        if (values.open) open++;
        if (current) {
          matched.add(current.id);
          if (current.open && !values.open) closed++;
          // (a run over days already analysed often changes nothing: no write then)
          const same = (Object.keys(values) as (keyof typeof values)[]).every((k) => k === "updatedAt" || current[k] === values[k]);
          if (!same) await tx.update(flags).set(values).where(eq(flags.id, current.id));
        } else {
          const [f] = await tx.insert(flags).values({ siteId, combinerId, state: "new", ...values }).returning({ id: flags.id });
          await tx.insert(flagEvents).values({ flagId: f!.id, fromState: null, toState: "new", reason: `raised by the analysis (low since ${run.firstDay})` });
          created++;
        }
      }
      // open flags the replay no longer supports: closed, their state left as it is
      for (const f of mine)
        if (f.open && !matched.has(f.id)) {
          await tx.update(flags).set({ open: false, updatedAt: new Date() }).where(eq(flags.id, f.id));
          closed++;
        }
    }
  });
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
  const { base, where, order } = flagSelect(siteId, q);
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

/** Every flag that matches the filter, in the screen's order, in one read (the CSV export: no page, no cap). */
export async function listAllFlags(siteId: string, q: Omit<FlagQuery, "page" | "pageSize"> = {}): Promise<FlagListItem[]> {
  const { base, order } = flagSelect(siteId, q);
  return base.orderBy(order, asc(devices.name), asc(flags.firstDay), asc(flags.id));
}

function flagSelect(siteId: string, q: FlagQuery) {
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
  return { base, where, order };
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
