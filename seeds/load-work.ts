import { readFileSync } from "node:fs";
import { join } from "node:path";
import { and, desc, eq } from "drizzle-orm";
import type { NodePgDatabase } from "drizzle-orm/node-postgres";
import * as schema from "../app/db/schema";
import { RESOLUTIONS, type Resolution } from "../app/db/schema";
import { addDays, whatToCheck } from "../app/domain/work-orders";
import { createWorkOrder, transitionWorkOrder } from "../app/models/work-orders.server";
import { verifyRecoveries } from "../app/models/recovery.server";
import { ensureTemplates, getInspection, recordInspection, scheduleInspection } from "../app/models/inspections.server";
import type { Db } from "../app/db/client.server";

/** One entry of the generator's work-orders.json (seeds/README.md). */
interface DemoWorkOrder {
  id: string;
  title: string;
  combiner: string | null;
  string: number | null;
  block: string | null;
  sourceFinding: string | null;
  createdOn: string;
  closedOn: string | null;
  status: "open" | "assigned" | "in progress" | "done" | "cancelled";
  assigneeRole: string;
  assignee: string;
  found: string | null;
  done: string | null;
}

function resolutionOf(found: string | null): Resolution {
  const f = (found ?? "").toLowerCase();
  return (RESOLUTIONS as readonly string[]).includes(f) ? (f as Resolution) : "other";
}

/** Local morning/afternoon of a demo day as an instant (Europe/Madrid is UTC+1/+2: close enough for a seed). */
const at = (day: string, hourUtc: number) => new Date(`${day}T${String(hourUtc).padStart(2, "0")}:00:00Z`);

/**
 * The demo's field history: the generated past work orders (the fuse repair WO-0001 among them,
 * done, so its recovery is verified from the analysed days) and a month of routine inspections,
 * all through the product's model functions. Idempotent: does nothing when the site has work
 * orders. Run it after the readings are imported and analysed.
 */
export async function loadDemoWork(
  db: NodePgDatabase<typeof schema>,
  p: { orgId: string; siteId: string; userIds: Record<string, string>; dir: string; today?: string },
): Promise<{ workOrders: number; inspections: number; recovered: number }> {
  const conn = db as unknown as Db;
  const [existing] = await db.select({ id: schema.workOrders.id }).from(schema.workOrders).where(eq(schema.workOrders.siteId, p.siteId)).limit(1);
  if (existing) return { workOrders: 0, inspections: 0, recovered: 0 };
  const leadId = p.userIds["lead@sunsift.test"] ?? null;
  const techId = p.userIds["tech@sunsift.test"] ?? null;
  const lead = { orgId: p.orgId, userId: leadId, roles: ["lead"] as const };
  const tech = { orgId: p.orgId, userId: techId, roles: ["technician"] as const };
  const list = JSON.parse(readFileSync(join(p.dir, "work-orders.json"), "utf8")) as DemoWorkOrder[];
  let created = 0;
  for (const w of list) {
    const [comb] = w.combiner
      ? await db.select().from(schema.devices).where(and(eq(schema.devices.siteId, p.siteId), eq(schema.devices.name, w.combiner))).limit(1)
      : [];
    const [blk] = w.block ? await db.select().from(schema.blocks).where(and(eq(schema.blocks.siteId, p.siteId), eq(schema.blocks.name, w.block))).limit(1) : [];
    const [flag] = comb
      ? await db.select().from(schema.flags).where(eq(schema.flags.combinerId, comb.id)).orderBy(desc(schema.flags.firstDay)).limit(1)
      : [];
    const strings = w.string != null ? [w.string] : [];
    const r = await createWorkOrder(
      { ...lead, roles: [...lead.roles] },
      p.siteId,
      {
        combinerId: comb?.id ?? null,
        blockId: comb ? null : (blk?.id ?? null),
        stringNumbers: strings,
        flagId: flag && flag.firstDay <= (w.closedOn ?? w.createdOn) ? flag.id : null,
        title: w.title,
        whatToCheck: whatToCheck({ combiner: comb?.name ?? null, strings, block: blk?.name ?? null }),
        assigneeId: techId,
        dueOn: addDays(w.createdOn, 7),
        priority: comb ? "high" : "normal",
      },
      { conn, notify: false, at: at(w.createdOn, 8) },
    );
    if (!r.ok) throw new Error(`demo work order ${w.id}: ${r.error}`);
    created++;
    if (w.status === "done" && w.closedOn) {
      const t = { ...tech, roles: [...tech.roles] };
      const started = await transitionWorkOrder(t, p.siteId, r.value.id, "in progress", {}, { conn, notify: false, at: at(w.closedOn, 7) });
      if (!started.ok) throw new Error(`demo work order ${w.id}: ${started.error}`);
      const closed = await transitionWorkOrder(
        t,
        p.siteId,
        r.value.id,
        "done",
        { closeOut: { resolution: resolutionOf(w.found), workDone: [w.found ? `Found: ${w.found}.` : "", w.done ?? ""].filter(Boolean).join(" "), minutesSpent: comb ? 55 : 240, repairedOn: w.closedOn } },
        { conn, notify: false, at: at(w.closedOn, 14) },
      );
      if (!closed.ok) throw new Error(`demo work order ${w.id}: ${closed.error}`);
    }
  }
  await verifyRecoveries(p.siteId, conn);
  // Count every verified repair: a close-out whose after-window was already analysed is verified
  // at once (transitionWorkOrder), so verifyRecoveries finds nothing left to settle.
  const verified = await db
    .select({ id: schema.recoveries.workOrderId })
    .from(schema.recoveries)
    .where(and(eq(schema.recoveries.siteId, p.siteId), eq(schema.recoveries.status, "recovered")));

  // A month of routine: last month's walk-down done by the technician, this month's overdue
  // (it stands out on the screen), and the annual inspection planned.
  const today = p.today ?? new Date().toISOString().slice(0, 10);
  const templates = await ensureTemplates(p.orgId, conn);
  const monthly = templates.find((t) => t.kind === "monthly")!;
  const annual = templates.find((t) => t.kind === "annual")!;
  const actor = { orgId: p.orgId, userId: leadId };
  const past = await scheduleInspection(actor, p.siteId, { templateId: monthly.id, dueOn: addDays(today, -33), assigneeId: techId }, conn);
  const found = await getInspection(p.siteId, past!.id, conn);
  const results: Record<number, { result: "ok" | "issue"; note: string | null }> = {};
  for (const it of found!.items)
    results[it.position] = it.group === "Vegetation" ? { result: "issue", note: "Tree line along the east fence of B4 grows into the fence; shading the first tables in the morning" } : { result: "ok", note: null };
  const rec = await recordInspection({ orgId: p.orgId, userId: techId }, p.siteId, past!.id, { results, notes: "Walked all four blocks. Gate B3 lock replaced.", finish: true, doneOn: addDays(today, -31) }, conn);
  if (!rec.ok) throw new Error(`demo inspection: ${rec.error}`);
  await scheduleInspection(actor, p.siteId, { templateId: monthly.id, dueOn: addDays(today, -3), assigneeId: techId }, conn);
  await scheduleInspection(actor, p.siteId, { templateId: annual.id, dueOn: addDays(today, 45), assigneeId: techId }, conn);
  return { workOrders: created, inspections: 3, recovered: verified.length };
}
