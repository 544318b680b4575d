/**
 * Work orders: created from a flag, a drone finding or by hand; moved through the state machine
 * of app/domain/work-orders.ts by managers and the assignee; closed with what was found and
 * done. Closing a work order on a combiner starts the recovery check.
 */
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { db, type Db } from "~/db/client.server";
import {
  auditEvents,
  blocks,
  devices,
  flagEvents,
  findings,
  flags,
  memberships,
  users,
  workOrderEvents,
  workOrders,
  WORK_ORDER_STATES,
  type Priority,
  type Resolution,
  type WorkOrder,
  type WorkOrderState,
} from "~/db/schema";
import { anomalyClass } from "~/domain/anomaly-classes";
import { actorsFor, findTransition, formatNumber, whatToCheck, type Actor } from "~/domain/work-orders";
import type { Role } from "~/permissions";
import { notifyAssignment } from "~/jobs/notifications.server";
import { verifyWorkOrder } from "./recovery.server";

export interface WoActor {
  orgId: string;
  userId: string | null;
  roles: readonly Role[];
}

export interface NewWorkOrder {
  combinerId: number | null;
  blockId?: number | null;
  stringNumbers: number[];
  flagId?: string | null;
  findingId?: string | null;
  title: string;
  whatToCheck: string;
  assigneeId?: string | null;
  dueOn?: string | null;
  priority?: Priority;
}

export interface Options {
  conn?: Db;
  /** false in the demo seed: past work orders do not e-mail anyone */
  notify?: boolean;
  /** backdating for the demo seed */
  at?: Date;
}

async function logAudit(conn: Db, actor: WoActor, action: string, entity: string, entityId: string, detail: Record<string, unknown>, at?: Date) {
  await conn.insert(auditEvents).values({ orgId: actor.orgId, userId: actor.userId, action, entity, entityId, detail, ...(at ? { at } : {}) });
}

async function moveFlag(conn: Db, actor: WoActor, flagId: string, onlyFrom: readonly string[] | null, to: string, reason: string, at?: Date) {
  const [f] = await conn.select().from(flags).where(eq(flags.id, flagId)).limit(1);
  if (!f || f.state === to || (onlyFrom && !onlyFrom.includes(f.state))) return;
  await conn.update(flags).set({ state: to as never, stateReason: reason, updatedAt: at ?? new Date() }).where(eq(flags.id, f.id));
  await conn.insert(flagEvents).values({ flagId: f.id, fromState: f.state, toState: to, reason, userId: actor.userId, ...(at ? { at } : {}) });
  await logAudit(conn, actor, "flag.state", "flag", f.id, { from: f.state, to, reason }, at);
}

/** People who may be given field work: technicians and O&M leads of the organisation. */
export async function assignableUsers(orgId: string, conn: Db = db()) {
  return conn
    .select({ id: users.id, name: users.name, email: users.email, roles: memberships.roles })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.orgId, orgId), eq(memberships.active, true), sql`${memberships.roles} && array['technician','lead']::text[]`))
    .orderBy(asc(users.name));
}

async function checkAssignee(orgId: string, userId: string, conn: Db): Promise<boolean> {
  return (await assignableUsers(orgId, conn)).some((u) => u.id === userId);
}

export type Result<T> = { ok: true; value: T } | { ok: false; error: string; field?: string };

/** Create a work order on the site (the caller checked the site and `workorders:manage`). */
export async function createWorkOrder(actor: WoActor, siteId: string, input: NewWorkOrder, opts: Options = {}): Promise<Result<WorkOrder>> {
  const conn = opts.conn ?? db();
  if (input.combinerId != null) {
    const [c] = await conn.select().from(devices).where(and(eq(devices.id, input.combinerId), eq(devices.siteId, siteId), eq(devices.kind, "combiner"))).limit(1);
    if (!c) return { ok: false, error: "That combiner is not on this site.", field: "combiner" };
    const bad = input.stringNumbers.filter((n) => !(n >= 1 && n <= (c.stringCount ?? 0)));
    if (bad.length) return { ok: false, error: `Combiner ${c.name} has strings 1 to ${c.stringCount}: ${bad.join(", ")} is not one of them.`, field: "strings" };
  }
  if (input.flagId) {
    const [f] = await conn.select().from(flags).where(and(eq(flags.id, input.flagId), eq(flags.siteId, siteId))).limit(1);
    if (!f) return { ok: false, error: "That flag is not on this site.", field: "flag" };
  }
  if (input.assigneeId && !(await checkAssignee(actor.orgId, input.assigneeId, conn)))
    return { ok: false, error: "Choose a technician or O&M lead of your organisation.", field: "assignee" };
  const at = opts.at ?? new Date();
  const wo = await conn.transaction(async (tx) => {
    // One numbering per site; the lock keeps two creators from taking the same number.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${"wo:" + siteId}))`);
    const [m] = await tx.select({ n: sql<number>`coalesce(max(${workOrders.number}), 0)::int` }).from(workOrders).where(eq(workOrders.siteId, siteId));
    const state: WorkOrderState = input.assigneeId ? "assigned" : "open";
    const [row] = await tx
      .insert(workOrders)
      .values({
        orgId: actor.orgId,
        siteId,
        number: (m?.n ?? 0) + 1,
        combinerId: input.combinerId,
        blockId: input.blockId ?? null,
        stringNumbers: [...new Set(input.stringNumbers)].sort((a, b) => a - b),
        flagId: input.flagId ?? null,
        findingId: input.findingId ?? null,
        title: input.title,
        whatToCheck: input.whatToCheck,
        assigneeId: input.assigneeId ?? null,
        dueOn: input.dueOn ?? null,
        priority: input.priority ?? "normal",
        state,
        createdBy: actor.userId,
        createdAt: at,
        updatedAt: at,
      })
      .returning();
    await tx.insert(workOrderEvents).values({ workOrderId: row!.id, fromState: null, toState: state, note: "created", userId: actor.userId, at });
    const db2 = tx as unknown as Db;
    if (row!.flagId) await moveFlag(db2, actor, row!.flagId, ["new", "explained", "needs flight"], "in field", `${formatNumber(row!.number)} created`, at);
    await logAudit(db2, actor, "workorder.create", "work_order", row!.id, { number: row!.number, title: row!.title, state }, at);
    return row!;
  });
  if (wo.assigneeId && opts.notify !== false) await notifyAssignment(wo.id, conn);
  return { ok: true, value: wo };
}

export async function getWorkOrder(siteId: string, id: string | undefined, conn: Db = db()): Promise<WorkOrder | null> {
  if (!id || !/^[0-9a-f-]{36}$/i.test(id)) return null;
  const [wo] = await conn.select().from(workOrders).where(and(eq(workOrders.id, id), eq(workOrders.siteId, siteId))).limit(1);
  return wo ?? null;
}

export interface CloseOut {
  resolution: Resolution;
  workDone: string;
  minutesSpent: number;
  repairedOn: string;
  photos?: string[];
}

/**
 * Move a work order. `assign` needs `assigneeId`; `close` needs the close-out. Checks the state
 * machine against who the caller is for this order.
 */
export async function transitionWorkOrder(
  actor: WoActor,
  siteId: string,
  id: string,
  to: WorkOrderState,
  extra: { assigneeId?: string | null; note?: string | null; closeOut?: CloseOut },
  opts: Options = {},
): Promise<Result<WorkOrder>> {
  const conn = opts.conn ?? db();
  if (!(WORK_ORDER_STATES as readonly string[]).includes(to)) return { ok: false, error: "Unknown state" };
  const wo = await getWorkOrder(siteId, id, conn);
  if (!wo) return { ok: false, error: "No such work order on this site" };
  const actors: Actor[] = actor.userId ? actorsFor({ roles: actor.roles, userId: actor.userId }, wo) : ["manager"];
  const t = findTransition(wo.state, to, actors);
  if (!t) return { ok: false, error: `A ${wo.state} work order cannot be moved to ${to} by you.` };
  const at = opts.at ?? new Date();
  const set: Partial<typeof workOrders.$inferInsert> = { state: to, updatedAt: at };
  if (t.action === "assign") {
    if (!extra.assigneeId || !(await checkAssignee(actor.orgId, extra.assigneeId, conn)))
      return { ok: false, error: "Choose a technician or O&M lead to assign.", field: "assignee" };
    set.assigneeId = extra.assigneeId;
  }
  if (t.action === "unassign") set.assigneeId = null;
  if (t.action === "close") {
    const c = extra.closeOut;
    if (!c) return { ok: false, error: "Say what you found and what you did." };
    set.resolution = c.resolution;
    set.workDone = c.workDone;
    set.minutesSpent = c.minutesSpent;
    set.repairedOn = c.repairedOn;
    set.photos = [...wo.photos, ...(c.photos ?? [])];
    set.closedAt = at;
  }
  const updated = await conn.transaction(async (tx) => {
    const db2 = tx as unknown as Db;
    const [row] = await tx
      .update(workOrders)
      .set(set)
      .where(and(eq(workOrders.id, wo.id), eq(workOrders.state, wo.state)))
      .returning();
    if (!row) return null;
    await tx.insert(workOrderEvents).values({ workOrderId: wo.id, fromState: wo.state, toState: to, note: extra.note ?? (t.action === "close" ? `found: ${extra.closeOut!.resolution}` : null), userId: actor.userId, at });
    await logAudit(db2, actor, `workorder.${t.action}`, "work_order", wo.id, { number: wo.number, from: wo.state, to, ...(set.assigneeId !== undefined ? { assigneeId: set.assigneeId } : {}) }, at);
    if (row.flagId) {
      if (t.action === "close") await moveFlag(db2, actor, row.flagId, ["in field", "new", "explained", "needs flight"], "verifying", `${formatNumber(row.number)} done: ${extra.closeOut!.resolution}`, at);
      if (t.action === "cancel") {
        const [other] = await tx
          .select({ n: sql<number>`count(*)::int` })
          .from(workOrders)
          .where(and(eq(workOrders.flagId, row.flagId), inArray(workOrders.state, ["open", "assigned", "in progress"])));
        if (!other?.n) await moveFlag(db2, actor, row.flagId, ["in field"], "new", `${formatNumber(row.number)} cancelled`, at);
      }
      if (t.action === "reopen") await moveFlag(db2, actor, row.flagId, ["new", "explained", "needs flight"], "in field", `${formatNumber(row.number)} reopened`, at);
    }
    return row;
  });
  if (!updated) return { ok: false, error: "Someone else changed this work order just now: reload and try again." };
  if (t.action === "assign" && opts.notify !== false) await notifyAssignment(updated.id, conn);
  if (t.action === "close") await verifyWorkOrder(updated, conn);
  return { ok: true, value: updated };
}

/** Add photos (object keys) to an active or done order. */
export async function addPhotos(siteId: string, id: string, keys: string[], conn: Db = db()): Promise<void> {
  if (!keys.length) return;
  await conn
    .update(workOrders)
    // One array of the keys (a bare array parameter would expand to a row of values, which fails for two or more).
    .set({ photos: sql`${workOrders.photos} || array[${sql.join(keys.map((k) => sql`${k}`), sql`, `)}]::text[]`, updatedAt: new Date() })
    .where(and(eq(workOrders.id, id), eq(workOrders.siteId, siteId)));
}

export interface WorkOrderListItem {
  id: string;
  number: number;
  title: string;
  state: WorkOrderState;
  priority: Priority;
  dueOn: string | null;
  combiner: string | null;
  block: string | null;
  strings: number[];
  assignee: string | null;
  assigneeId: string | null;
  resolution: Resolution | null;
  closedAt: Date | null;
  createdAt: Date;
}

export async function listWorkOrders(
  siteId: string,
  q: { states?: WorkOrderState[]; assigneeId?: string; page?: number; pageSize?: number } = {},
  conn: Db = db(),
): Promise<{ items: WorkOrderListItem[]; total: number; page: number; pageSize: number }> {
  const pageSize = Math.min(200, Math.max(1, q.pageSize ?? 50));
  const page = Math.max(1, q.page ?? 1);
  const conds = [eq(workOrders.siteId, siteId)];
  if (q.states?.length) conds.push(inArray(workOrders.state, q.states));
  if (q.assigneeId) conds.push(eq(workOrders.assigneeId, q.assigneeId));
  const where = and(...conds);
  const combiner = devices;
  const [items, [count]] = await Promise.all([
    conn
      .select({
        id: workOrders.id,
        number: workOrders.number,
        title: workOrders.title,
        state: workOrders.state,
        priority: workOrders.priority,
        dueOn: workOrders.dueOn,
        combiner: combiner.name,
        block: blocks.name,
        strings: workOrders.stringNumbers,
        assignee: users.name,
        assigneeId: workOrders.assigneeId,
        resolution: workOrders.resolution,
        closedAt: workOrders.closedAt,
        createdAt: workOrders.createdAt,
      })
      .from(workOrders)
      .leftJoin(combiner, eq(combiner.id, workOrders.combinerId))
      .leftJoin(blocks, sql`${blocks.id} = coalesce(${workOrders.blockId}, ${combiner.blockId})`)
      .leftJoin(users, eq(users.id, workOrders.assigneeId))
      .where(where)
      .orderBy(
        sql`case ${workOrders.priority} when 'urgent' then 0 when 'high' then 1 when 'normal' then 2 else 3 end`,
        sql`${workOrders.dueOn} asc nulls last`,
        desc(workOrders.number),
      )
      .limit(pageSize)
      .offset((page - 1) * pageSize),
    conn.select({ n: sql<number>`count(*)::int` }).from(workOrders).where(where),
  ]);
  return { items, total: count?.n ?? 0, page, pageSize };
}

export async function workOrderCounts(siteId: string, conn: Db = db()): Promise<Record<WorkOrderState, number>> {
  const rows = await conn.select({ state: workOrders.state, n: sql<number>`count(*)::int` }).from(workOrders).where(eq(workOrders.siteId, siteId)).groupBy(workOrders.state);
  const out = Object.fromEntries(WORK_ORDER_STATES.map((s) => [s, 0])) as Record<WorkOrderState, number>;
  for (const r of rows) out[r.state] = r.n;
  return out;
}

export async function workOrderDetail(siteId: string, id: string | undefined, conn: Db = db()) {
  const wo = await getWorkOrder(siteId, id, conn);
  if (!wo) return null;
  const [comb] = wo.combinerId ? await conn.select().from(devices).where(eq(devices.id, wo.combinerId)).limit(1) : [];
  const blockId = wo.blockId ?? comb?.blockId ?? null;
  const [blk] = blockId ? await conn.select().from(blocks).where(eq(blocks.id, blockId)).limit(1) : [];
  const [inv] = comb?.parentId ? await conn.select({ name: devices.name }).from(devices).where(eq(devices.id, comb.parentId)).limit(1) : [];
  const [assignee] = wo.assigneeId ? await conn.select({ id: users.id, name: users.name }).from(users).where(eq(users.id, wo.assigneeId)).limit(1) : [];
  const [flag] = wo.flagId ? await conn.select().from(flags).where(eq(flags.id, wo.flagId)).limit(1) : [];
  const events = await conn
    .select({ id: workOrderEvents.id, fromState: workOrderEvents.fromState, toState: workOrderEvents.toState, note: workOrderEvents.note, at: workOrderEvents.at, who: users.name })
    .from(workOrderEvents)
    .leftJoin(users, eq(users.id, workOrderEvents.userId))
    .where(eq(workOrderEvents.workOrderId, wo.id))
    .orderBy(asc(workOrderEvents.at), asc(workOrderEvents.id));
  return {
    wo,
    combiner: comb ? { id: comb.id, name: comb.name, stringCount: comb.stringCount } : null,
    inverter: inv?.name ?? null,
    block: blk?.name ?? null,
    assignee: assignee ?? null,
    flag: flag ? { id: flag.id, state: flag.state, stringsOut: flag.stringsOut, lostKwhPerDay: flag.lostKwhPerDay, firstDay: flag.firstDay } : null,
    events,
  };
}

/** Prefill of the new-work-order form from a flag. */
export async function prefillFromFlag(siteId: string, flagId: string, conn: Db = db()) {
  if (!/^[0-9a-f-]{36}$/i.test(flagId)) return null;
  const [f] = await conn
    .select({ flag: flags, combiner: devices.name, stringCount: devices.stringCount })
    .from(flags)
    .innerJoin(devices, eq(devices.id, flags.combinerId))
    .where(and(eq(flags.id, flagId), eq(flags.siteId, siteId)))
    .limit(1);
  if (!f) return null;
  const k = f.flag.stringsOut;
  return {
    flagId: f.flag.id,
    findingId: null as string | null,
    combinerId: f.flag.combinerId,
    combiner: f.combiner,
    strings: [] as number[],
    title: `${f.combiner}: ${k} string${k === 1 ? "" : "s"} out`,
    whatToCheck: whatToCheck({ combiner: f.combiner, strings: [] }),
    priority: (f.flag.lostKwhPerDay >= 50 ? "high" : "normal") as Priority,
    note: `Flag since ${f.flag.firstDay}: about ${k} of ${f.stringCount} strings out, ${f.flag.lostKwhPerDay.toFixed(1)} kWh/day lost.`,
  };
}

/** Prefill from a drone finding of this site: its string, its class in words, and the open flag of its combiner. */
export async function prefillFromFinding(siteId: string, findingId: string, conn: Db = db()) {
  if (!/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i.test(findingId)) return null;
  const [row] = await conn
    .select({ combinerId: findings.combinerId, stringNumber: findings.stringNumber, classKey: findings.classKey, combiner: devices.name })
    .from(findings)
    .innerJoin(devices, eq(devices.id, findings.combinerId))
    .where(and(eq(findings.id, findingId), eq(findings.siteId, siteId)))
    .limit(1);
  if (!row) return null;
  const anomaly = anomalyClass(row.classKey)?.name ?? row.classKey;
  const strings = [row.stringNumber];
  const [openFlag] = await conn.select({ id: flags.id }).from(flags).where(and(eq(flags.combinerId, row.combinerId), eq(flags.open, true))).limit(1);
  return {
    flagId: openFlag?.id ?? null,
    findingId,
    combinerId: row.combinerId,
    combiner: row.combiner,
    strings,
    title: `Check string ${row.combiner}/${row.stringNumber}: ${anomaly} in IR`,
    whatToCheck: whatToCheck({ combiner: row.combiner, strings, anomaly }),
    priority: "normal" as Priority,
    note: `Drone finding: ${anomaly}.`,
  };
}

export async function siteCombiners(siteId: string, conn: Db = db()) {
  return conn
    .select({ id: devices.id, name: devices.name, stringCount: devices.stringCount })
    .from(devices)
    .where(and(eq(devices.siteId, siteId), eq(devices.kind, "combiner")))
    .orderBy(asc(devices.name));
}

export async function siteBlocks(siteId: string, conn: Db = db()) {
  return conn.select({ id: blocks.id, name: blocks.name }).from(blocks).where(eq(blocks.siteId, siteId)).orderBy(asc(blocks.name));
}

/** Whether a drone finding is one of the site's (a work order started from it must be). */
export async function findingOnSite(siteId: string, findingId: string, conn: Db = db()): Promise<boolean> {
  if (!/^[0-9a-f-]{36}$/i.test(findingId)) return false;
  const [f] = await conn.select({ id: findings.id }).from(findings).where(and(eq(findings.id, findingId), eq(findings.siteId, siteId))).limit(1);
  return !!f;
}
