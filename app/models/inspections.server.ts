/**
 * Routine inspections: a monthly visual walk-down and an annual in-depth inspection per site
 * (the usual O&M routine), each a checklist copied from the organisation's template when it is
 * scheduled, done by a technician with results, notes and photos.
 */
import { and, asc, desc, eq, sql } from "drizzle-orm";
import { db, type Db } from "~/db/client.server";
import { auditEvents, inspectionItems, inspections, inspectionTemplates, users, type ChecklistItem, type InspectionResult } from "~/db/schema";
import { addDays } from "~/domain/work-orders";

/** Default checklists; wording of common O&M practice [P]. */
export const DEFAULT_TEMPLATES: { name: string; kind: "monthly" | "annual"; everyMonths: number; items: ChecklistItem[] }[] = [
  {
    name: "Monthly visual walk-down",
    kind: "monthly",
    everyMonths: 1,
    items: [
      { group: "Fencing and access", label: "Fence intact, no gaps or undermining" },
      { group: "Fencing and access", label: "Gates locked; warning signs in place and legible" },
      { group: "Vegetation", label: "Vegetation below the lower module edge; none touching cables or trackers" },
      { group: "Cable management", label: "String cables clipped and off the ground; no sagging or chafing" },
      { group: "Cable management", label: "Connectors fully mated; no discoloured or melted connectors" },
      { group: "Combiner enclosures", label: "Doors closed and sealed; no water, insects or nests inside" },
      { group: "Combiner enclosures", label: "No burn marks, smell or heat on the enclosure (look, do not open live)" },
      { group: "Modules and structure", label: "No broken glass, heavy soiling or loose clamps" },
      { group: "Inverters", label: "No active alarms; air intakes and filters clear" },
    ],
  },
  {
    name: "Annual in-depth inspection",
    kind: "annual",
    everyMonths: 12,
    items: [
      { group: "Combiner enclosures", label: "Every combiner opened (isolated, locked out): fuses, holders and surge protection checked" },
      { group: "Torque checks", label: "Terminal and busbar torque checked to the manufacturer's values" },
      { group: "Cable management", label: "Insulation resistance of a sample of strings measured and recorded" },
      { group: "Cable management", label: "Earthing and bonding continuity checked" },
      { group: "Inverter checks", label: "Filters, fans and cooling cleaned; firmware and event log reviewed" },
      { group: "Inverter checks", label: "AC and DC terminations torque-checked and inspected for heat damage" },
      { group: "Modules and structure", label: "Structure, piles and tracker drives inspected; tracker angles checked" },
      { group: "Fencing and access", label: "Perimeter, gates and access roads inspected" },
      { group: "Vegetation", label: "Vegetation plan reviewed; drainage clear" },
    ],
  },
];

export async function ensureTemplates(orgId: string, conn: Db = db()) {
  for (const t of DEFAULT_TEMPLATES) await conn.insert(inspectionTemplates).values({ orgId, ...t }).onConflictDoNothing();
  return conn.select().from(inspectionTemplates).where(eq(inspectionTemplates.orgId, orgId)).orderBy(asc(inspectionTemplates.everyMonths));
}

export interface Actor {
  orgId: string;
  userId: string | null;
}

export async function scheduleInspection(actor: Actor, siteId: string, p: { templateId: string; dueOn: string; assigneeId?: string | null }, conn: Db = db()) {
  const [t] = await conn.select().from(inspectionTemplates).where(and(eq(inspectionTemplates.id, p.templateId), eq(inspectionTemplates.orgId, actor.orgId))).limit(1);
  if (!t) return null;
  return conn.transaction(async (tx) => {
    const [row] = await tx
      .insert(inspections)
      .values({ orgId: actor.orgId, siteId, templateId: t.id, title: `${t.name} ${t.kind === "annual" ? p.dueOn.slice(0, 4) : p.dueOn.slice(0, 7)}`, dueOn: p.dueOn, assigneeId: p.assigneeId ?? null })
      .returning();
    await tx.insert(inspectionItems).values(t.items.map((it, i) => ({ inspectionId: row!.id, position: i + 1, group: it.group, label: it.label })));
    await tx.insert(auditEvents).values({ orgId: actor.orgId, userId: actor.userId, action: "inspection.schedule", entity: "inspection", entityId: row!.id, detail: { title: row!.title, dueOn: p.dueOn } });
    return row!;
  });
}

/**
 * Plan the routine for `months` months from `fromDay`: a walk-down on the same day of each
 * month, and the annual inspection when none is planned in the coming year. Skips months that
 * already have one.
 */
export async function scheduleRoutine(actor: Actor, siteId: string, p: { fromDay: string; months: number; assigneeId?: string | null }, conn: Db = db()) {
  const templates = await ensureTemplates(actor.orgId, conn);
  const monthly = templates.find((t) => t.kind === "monthly")!;
  const annual = templates.find((t) => t.kind === "annual")!;
  const existing = await conn.select({ templateId: inspections.templateId, dueOn: inspections.dueOn }).from(inspections).where(eq(inspections.siteId, siteId));
  const created = [];
  for (let i = 0; i < p.months; i++) {
    const d = new Date(`${p.fromDay}T00:00:00Z`);
    d.setUTCMonth(d.getUTCMonth() + i);
    const due = d.toISOString().slice(0, 10);
    if (existing.some((e) => e.templateId === monthly.id && e.dueOn.slice(0, 7) === due.slice(0, 7))) continue;
    created.push(await scheduleInspection(actor, siteId, { templateId: monthly.id, dueOn: due, assigneeId: p.assigneeId }, conn));
  }
  const yearEnd = addDays(p.fromDay, 365);
  if (!existing.some((e) => e.templateId === annual.id && e.dueOn >= p.fromDay && e.dueOn < yearEnd))
    created.push(await scheduleInspection(actor, siteId, { templateId: annual.id, dueOn: addDays(p.fromDay, 60), assigneeId: p.assigneeId }, conn));
  return created.filter(Boolean).length;
}

export async function listInspections(siteId: string, page = 1, conn: Db = db()) {
  const pageSize = 25;
  const rows = await conn
    .select({
      id: inspections.id,
      title: inspections.title,
      dueOn: inspections.dueOn,
      state: inspections.state,
      doneOn: inspections.doneOn,
      assignee: users.name,
      kind: inspectionTemplates.kind,
      issues: sql<number>`(select count(*)::int from inspection_items i where i.inspection_id = ${inspections.id} and i.result = 'issue')`,
    })
    .from(inspections)
    .innerJoin(inspectionTemplates, eq(inspectionTemplates.id, inspections.templateId))
    .leftJoin(users, eq(users.id, inspections.assigneeId))
    .where(eq(inspections.siteId, siteId))
    .orderBy(sql`case when ${inspections.state} in ('scheduled', 'in progress') then 0 else 1 end`, sql`case when ${inspections.state} in ('scheduled', 'in progress') then ${inspections.dueOn} end asc`, desc(inspections.dueOn))
    .limit(pageSize + 1)
    .offset((page - 1) * pageSize);
  return { items: rows.slice(0, pageSize), hasMore: rows.length > pageSize, page };
}

export async function getInspection(siteId: string, id: string, conn: Db = db()) {
  if (!/^[0-9a-f-]{36}$/i.test(id)) return null;
  const [row] = await conn.select().from(inspections).where(and(eq(inspections.id, id), eq(inspections.siteId, siteId))).limit(1);
  if (!row) return null;
  const items = await conn.select().from(inspectionItems).where(eq(inspectionItems.inspectionId, id)).orderBy(asc(inspectionItems.position));
  return { inspection: row, items };
}

/** Record the walk: each item's result and note, overall notes and photos; done when `finish`. */
export async function recordInspection(
  actor: Actor,
  siteId: string,
  id: string,
  p: { results: Record<number, { result: InspectionResult | null; note: string | null }>; notes: string | null; photos?: string[]; finish: boolean; doneOn: string },
  conn: Db = db(),
): Promise<{ ok: true } | { ok: false; error: string }> {
  const found = await getInspection(siteId, id, conn);
  if (!found) return { ok: false, error: "No such inspection on this site" };
  if (found.inspection.state === "done" || found.inspection.state === "cancelled") return { ok: false, error: "This inspection is already closed." };
  if (p.finish) {
    const missing = found.items.filter((it) => !(p.results[it.position]?.result ?? it.result));
    if (missing.length) return { ok: false, error: `Mark every item before finishing: ${missing.length} still open (first: “${missing[0]!.label}”).` };
  }
  await conn.transaction(async (tx) => {
    for (const it of found.items) {
      const r = p.results[it.position];
      if (!r) continue;
      await tx.update(inspectionItems).set({ result: r.result, note: r.note }).where(eq(inspectionItems.id, it.id));
    }
    await tx
      .update(inspections)
      .set({
        notes: p.notes,
        photos: [...found.inspection.photos, ...(p.photos ?? [])],
        state: p.finish ? "done" : "in progress",
        doneOn: p.finish ? p.doneOn : null,
        doneBy: p.finish ? actor.userId : null,
        updatedAt: new Date(),
      })
      .where(eq(inspections.id, id));
    if (p.finish)
      await tx.insert(auditEvents).values({ orgId: actor.orgId, userId: actor.userId, action: "inspection.done", entity: "inspection", entityId: id, detail: { title: found.inspection.title } });
  });
  return { ok: true };
}
