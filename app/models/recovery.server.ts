/**
 * Verification of repairs: for each work order closed on a combiner, compare the combiner's
 * output relative to its peers (combiner_days) over N clean days after the repair day with N
 * before it, store the result, and move the linked flag: verifying → recovered, or back to
 * triage with a plain message. Runs after every analysis (verifyRecoveries) and at close-out.
 */
import { and, asc, desc, eq, gte, inArray, isNotNull, lte, sql } from "drizzle-orm";
import { db, type Db } from "~/db/client.server";
import { auditEvents, combinerDays, devices, flagEvents, flags, recoveries, sites, workOrders, type Recovery, type WorkOrder } from "~/db/schema";
import { recovery } from "~/domain/recovery";
import { addDays, expectedDailyKwh, formatNumber, recoveryVerdict, relativeOi, type RecoveryDay } from "~/domain/work-orders";

/** How far around the repair day to look for clean days (cloudy spells, outages). */
const SEARCH_DAYS = 45;
/** Rough specific yield when no deficit day gives the combiner's expected energy, kWh/kWp/day [P]. */
const FALLBACK_YIELD = 4.5;

async function loadDays(conn: Db, combinerId: number, from: string, to: string): Promise<RecoveryDay[]> {
  const rows = await conn
    .select({
      day: combinerDays.day,
      oi: combinerDays.outputIndex,
      peer: combinerDays.peerMedianOi,
      lostKwh: combinerDays.lostKwh,
      lossClass: combinerDays.lossClass,
      valid: combinerDays.validIntervals,
      total: combinerDays.totalIntervals,
    })
    .from(combinerDays)
    .where(and(eq(combinerDays.combinerId, combinerId), gte(combinerDays.day, from), lte(combinerDays.day, to)))
    .orderBy(asc(combinerDays.day));
  return rows;
}

/** Measure one done work order and apply the verdict. Returns the stored recovery, or null when it has no combiner. */
export async function verifyWorkOrder(wo: WorkOrder, conn: Db = db()): Promise<Recovery | null> {
  if (wo.state !== "done" || wo.combinerId == null || !wo.repairedOn) return null;
  const [site] = await conn.select().from(sites).where(eq(sites.id, wo.siteId)).limit(1);
  const [comb] = await conn.select().from(devices).where(eq(devices.id, wo.combinerId)).limit(1);
  if (!site || !comb) return null;
  const n = comb.stringCount ?? 0;
  const windowDays = site.settings.thresholds.recoveryDays ?? 5;
  const [flag] = wo.flagId ? await conn.select().from(flags).where(eq(flags.id, wo.flagId)).limit(1) : [];
  const days = await loadDays(conn, wo.combinerId, addDays(wo.repairedOn, -SEARCH_DAYS), addDays(wo.repairedOn, SEARCH_DAYS));
  // Before: days before the repair day, not earlier than the flag's first low day (that would
  // compare with the healthy time before the fault). After: from the day after the repair.
  const beforeFrom = flag?.firstDay ?? "0000-01-01";
  const beforeDays = days.filter((d) => d.day < wo.repairedOn! && d.day >= beforeFrom);
  const afterDays = days.filter((d) => d.day > wo.repairedOn!);
  const before = beforeDays.map(relativeOi);
  const after = afterDays.map(relativeOi);
  const cleanBefore = beforeDays.filter((_, i) => before[i] != null).slice(-windowDays);
  let expected = expectedDailyKwh(cleanBefore, n);
  if (expected == null) {
    const [m] = await conn.execute<{ modules: number }>(sql`select coalesce(sum(modules), 0)::int modules from strings where combiner_id = ${wo.combinerId}`).then((r) => r.rows);
    expected = ((m?.modules ?? 0) * site.settings.module.pmp * FALLBACK_YIELD) / 1000;
  }
  const r = recovery({ before, after, nStrings: n, expectedDailyKwh: expected, tariffPerMwh: site.settings.tariffPerMwh, days: windowDays });
  const nBefore = before.filter((x) => x != null).length;
  const nAfter = after.filter((x) => x != null).length;
  const verdict = recoveryVerdict({
    beforeOi: r.beforeOi,
    afterOi: r.afterOi,
    beforeDays: nBefore,
    afterDays: nAfter,
    windowDays,
    nStrings: n,
    recoveredStrings: r.recoveredStrings,
    kwhPerDay: r.recoveredKwhPerDay,
    annualValue: r.annualValue,
    currency: site.settings.currency,
    resolution: wo.resolution,
    minDeficitStrings: site.settings.thresholds.minDeficitStrings,
  });
  const values = {
    siteId: wo.siteId,
    combinerId: wo.combinerId,
    flagId: wo.flagId,
    repairedOn: wo.repairedOn,
    windowDays,
    beforeOi: r.beforeOi,
    afterOi: r.afterOi,
    beforeDays: Math.min(nBefore, windowDays),
    afterDays: Math.min(nAfter, windowDays),
    recoveredStrings: r.recoveredStrings,
    kwhPerDay: r.recoveredKwhPerDay,
    annualKwh: r.annualKwh,
    annualValue: r.annualValue,
    status: verdict.status,
    message: verdict.message,
    checkedAt: new Date(),
    verifiedAt: verdict.status === "verifying" ? null : new Date(),
  };
  const [row] = await conn
    .insert(recoveries)
    .values({ workOrderId: wo.id, ...values })
    .onConflictDoUpdate({ target: recoveries.workOrderId, set: values })
    .returning();
  if (flag && verdict.flagState && flag.state !== verdict.flagState && (flag.state === "verifying" || flag.state === "in field")) {
    const reason = `${formatNumber(wo.number)}: ${verdict.message}`;
    await conn.transaction(async (tx) => {
      await tx.update(flags).set({ state: verdict.flagState!, stateReason: reason, updatedAt: new Date() }).where(eq(flags.id, flag.id));
      await tx.insert(flagEvents).values({ flagId: flag.id, fromState: flag.state, toState: verdict.flagState!, reason, userId: null });
    });
    await auditFlag(conn, wo, flag.id, flag.state, verdict.flagState, reason);
  }
  return row!;
}

async function auditFlag(conn: Db, wo: WorkOrder, flagId: string, from: string, to: string, reason: string) {
  await conn.insert(auditEvents).values({ orgId: wo.orgId, userId: null, action: "flag.state", entity: "flag", entityId: flagId, detail: { from, to, reason, by: "recovery check" } });
}

/**
 * Check every repair on the site still waiting for its after-window. Call after each analysis
 * run (new combiner_days) and it settles the ones whose data is now complete.
 */
export async function verifyRecoveries(siteId: string, conn: Db = db()): Promise<{ checked: number; recovered: number; notRecovered: number; waiting: number }> {
  const settled = conn.select({ id: recoveries.workOrderId }).from(recoveries).where(and(eq(recoveries.siteId, siteId), inArray(recoveries.status, ["recovered", "not recovered"])));
  const pending = await conn
    .select()
    .from(workOrders)
    .where(and(eq(workOrders.siteId, siteId), eq(workOrders.state, "done"), isNotNull(workOrders.combinerId), isNotNull(workOrders.repairedOn), sql`${workOrders.id} not in ${settled}`));
  const out = { checked: 0, recovered: 0, notRecovered: 0, waiting: 0 };
  for (const wo of pending) {
    const r = await verifyWorkOrder(wo, conn);
    if (!r) continue;
    out.checked++;
    if (r.status === "recovered") out.recovered++;
    else if (r.status === "not recovered") out.notRecovered++;
    else out.waiting++;
  }
  return out;
}

export interface RecoveryRow {
  workOrderId: string;
  number: number;
  title: string;
  combinerId: number;
  combiner: string;
  strings: number[];
  repairedOn: string;
  resolution: string | null;
  status: Recovery["status"];
  message: string;
  beforeOi: number | null;
  afterOi: number | null;
  recoveredStrings: number | null;
  kwhPerDay: number | null;
  annualValue: number | null;
  windowDays: number;
  /** kWh brought back from the day after the repair to the last analysed day */
  toDateKwh: number;
}

/** Last day with combiner results on the site (what "to date" means). */
export async function lastAnalysedDay(siteId: string, conn: Db = db()): Promise<string | null> {
  const [r] = await conn.select({ d: sql<string | null>`max(${combinerDays.day})::text` }).from(combinerDays).where(eq(combinerDays.siteId, siteId));
  return r?.d ?? null;
}

function daysBetween(a: string, b: string): number {
  return Math.round((Date.parse(`${b}T00:00:00Z`) - Date.parse(`${a}T00:00:00Z`)) / 86_400_000);
}

/** Recovered energy of one repair per calendar month: kWh/day from the day after the repair to `until`. */
export function monthlyKwh(repairedOn: string, kwhPerDay: number, until: string): Map<string, number> {
  const out = new Map<string, number>();
  for (let d = addDays(repairedOn, 1); d <= until; d = addDays(d, 1)) out.set(d.slice(0, 7), (out.get(d.slice(0, 7)) ?? 0) + kwhPerDay);
  return out;
}

export async function listRecoveries(siteId: string, conn: Db = db()): Promise<{ rows: RecoveryRow[]; lastDay: string | null }> {
  const lastDay = await lastAnalysedDay(siteId, conn);
  const rows = await conn
    .select({
      workOrderId: recoveries.workOrderId,
      number: workOrders.number,
      title: workOrders.title,
      combinerId: recoveries.combinerId,
      combiner: devices.name,
      strings: workOrders.stringNumbers,
      repairedOn: recoveries.repairedOn,
      resolution: workOrders.resolution,
      status: recoveries.status,
      message: recoveries.message,
      beforeOi: recoveries.beforeOi,
      afterOi: recoveries.afterOi,
      recoveredStrings: recoveries.recoveredStrings,
      kwhPerDay: recoveries.kwhPerDay,
      annualValue: recoveries.annualValue,
      windowDays: recoveries.windowDays,
    })
    .from(recoveries)
    .innerJoin(workOrders, eq(workOrders.id, recoveries.workOrderId))
    .innerJoin(devices, eq(devices.id, recoveries.combinerId))
    .where(eq(recoveries.siteId, siteId))
    .orderBy(desc(recoveries.repairedOn), desc(workOrders.number));
  return {
    lastDay,
    rows: rows.map((r) => ({
      ...r,
      toDateKwh: r.status === "recovered" && r.kwhPerDay && lastDay && lastDay > r.repairedOn ? r.kwhPerDay * daysBetween(r.repairedOn, lastDay) : 0,
    })),
  };
}

/** Relative output index per day around one repair, for the before/after chart. */
export async function recoverySeries(siteId: string, workOrderId: string, conn: Db = db()) {
  const [rec] = await conn.select().from(recoveries).where(and(eq(recoveries.siteId, siteId), eq(recoveries.workOrderId, workOrderId))).limit(1);
  if (!rec) return null;
  const days = await loadDays(conn, rec.combinerId, addDays(rec.repairedOn, -20), addDays(rec.repairedOn, 20));
  return { repairedOn: rec.repairedOn, beforeOi: rec.beforeOi, afterOi: rec.afterOi, days: days.map((d) => ({ day: d.day, r: relativeOi(d) })) };
}

/** Per site: recovered kWh to date and the number of repairs done (portfolio). */
export async function recoveryTotals(siteIds: string[], conn: Db = db()): Promise<Map<string, { recoveredKwh: number; repairsDone: number; verified: number }>> {
  const out = new Map<string, { recoveredKwh: number; repairsDone: number; verified: number }>();
  if (!siteIds.length) return out;
  const done = await conn
    .select({ siteId: workOrders.siteId, n: sql<number>`count(*)::int` })
    .from(workOrders)
    .where(and(inArray(workOrders.siteId, siteIds), eq(workOrders.state, "done")))
    .groupBy(workOrders.siteId);
  for (const id of siteIds) out.set(id, { recoveredKwh: 0, repairsDone: 0, verified: 0 });
  for (const d of done) out.get(d.siteId)!.repairsDone = d.n;
  for (const id of siteIds) {
    const { rows } = await listRecoveries(id, conn);
    const t = out.get(id)!;
    for (const r of rows) {
      t.recoveredKwh += r.toDateKwh;
      if (r.status === "recovered") t.verified++;
    }
  }
  return out;
}

/** Open loss per site from open flags that still need work (not dismissed, not recovered). */
export async function openLossBySite(siteIds: string[], conn: Db = db()): Promise<Map<string, { flags: number; kwhPerDay: number }>> {
  const out = new Map<string, { flags: number; kwhPerDay: number }>();
  if (!siteIds.length) return out;
  const rows = await conn
    .select({ siteId: flags.siteId, n: sql<number>`count(*)::int`, kwh: sql<number>`coalesce(sum(${flags.lostKwhPerDay}), 0)::float8` })
    .from(flags)
    .where(and(inArray(flags.siteId, siteIds), eq(flags.open, true), sql`${flags.state} not in ('dismissed', 'recovered')`))
    .groupBy(flags.siteId);
  for (const r of rows) out.set(r.siteId, { flags: r.n, kwhPerDay: r.kwh });
  return out;
}
