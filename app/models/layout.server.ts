import { and, asc, eq, inArray, notInArray, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { blocks, devices, strings } from "~/db/schema";
import { parseLayoutCsv, type LayoutError, type LayoutTotals } from "~/domain/import/layout";
import { audit } from "~/services/audit.server";

export interface LayoutImportResult {
  ok: boolean;
  errors: LayoutError[];
  errorCount: number;
  warnings: LayoutError[];
  totals: LayoutTotals | null;
  preview: { block: string; inverter: string; combiner: string; string: string; modules: number; x: number | null; y: number | null }[];
}

/** Combiners that already hold readings, with their string count: their count may not change. */
async function combinersWithHistory(siteId: string): Promise<Map<string, number>> {
  const rows = await db().execute<{ name: string; string_count: number }>(sql`
    select d.name, d.string_count from devices d
    where d.site_id = ${siteId} and d.kind = 'combiner'
      and exists (select 1 from readings r where r.device_id = d.id limit 1)`);
  return new Map(rows.rows.map((r) => [r.name, r.string_count]));
}

/**
 * Check a layout CSV and, unless `dryRun`, apply it in one transaction: blocks, inverters and
 * combiners are matched by name and updated in place, so they keep their ids and history.
 */
export async function importLayout(
  actor: { orgId: string; userId: string | null },
  siteId: string,
  text: string,
  opts: { dryRun: boolean },
): Promise<LayoutImportResult> {
  const parsed = parseLayoutCsv(text, { combinersWithHistory: await combinersWithHistory(siteId) });
  if (!parsed.ok) return { ok: false, errors: parsed.errors, errorCount: parsed.errorCount, warnings: [], totals: null, preview: [] };
  const numberErrors: LayoutError[] = [];
  for (const r of parsed.rows) {
    if (!/^\d{1,4}$/.test(r.string) || Number(r.string) < 1)
      numberErrors.push({ line: r.line, reason: `string "${r.string}" must be its number within the combiner (1, 2, 3…)` });
  }
  if (numberErrors.length) return { ok: false, errors: numberErrors.slice(0, 200), errorCount: numberErrors.length, warnings: [], totals: null, preview: [] };
  const preview = parsed.rows.slice(0, 20).map(({ line: _l, ...r }) => r);
  if (opts.dryRun) return { ok: true, errors: [], errorCount: 0, warnings: parsed.warnings, totals: parsed.totals, preview };

  await db().transaction(async (tx) => {
    const blockIds = new Map<string, number>();
    for (const name of new Set(parsed.rows.map((r) => r.block))) {
      const [b] = await tx.insert(blocks).values({ siteId, name }).onConflictDoUpdate({ target: [blocks.siteId, blocks.name], set: { name } }).returning({ id: blocks.id });
      blockIds.set(name, b!.id);
    }
    const inverterIds = new Map<string, number>();
    for (const c of parsed.combiners) {
      if (inverterIds.has(c.inverter)) continue;
      const [inv] = await tx
        .insert(devices)
        .values({ siteId, kind: "inverter", name: c.inverter, blockId: blockIds.get(c.block)! })
        .onConflictDoUpdate({ target: [devices.siteId, devices.name], set: { blockId: blockIds.get(c.block)!, kind: "inverter" } })
        .returning({ id: devices.id });
      inverterIds.set(c.inverter, inv!.id);
    }
    const combinerIds = new Map<string, number>();
    for (const c of parsed.combiners) {
      const [row] = await tx
        .insert(devices)
        .values({ siteId, kind: "combiner", name: c.name, blockId: blockIds.get(c.block)!, parentId: inverterIds.get(c.inverter)!, stringCount: c.strings })
        .onConflictDoUpdate({
          target: [devices.siteId, devices.name],
          set: { blockId: blockIds.get(c.block)!, parentId: inverterIds.get(c.inverter)!, stringCount: c.strings, kind: "combiner" },
        })
        .returning({ id: devices.id });
      combinerIds.set(c.name, row!.id);
    }
    // Strings: upsert in batches, then drop those no longer listed on the combiners in this file.
    const values = parsed.rows.map((r) => ({ combinerId: combinerIds.get(r.combiner)!, number: Number(r.string), modules: r.modules, x: r.x, y: r.y }));
    for (let i = 0; i < values.length; i += 2000) {
      await tx
        .insert(strings)
        .values(values.slice(i, i + 2000))
        .onConflictDoUpdate({ target: [strings.combinerId, strings.number], set: { modules: sql`excluded.modules`, x: sql`excluded.x`, y: sql`excluded.y` } });
    }
    for (const [name, id] of combinerIds) {
      const keep = parsed.rows.filter((r) => r.combiner === name).map((r) => Number(r.string));
      await tx.delete(strings).where(and(eq(strings.combinerId, id), notInArray(strings.number, keep)));
    }
  });
  await audit({ orgId: actor.orgId, userId: actor.userId, action: "layout.import", entity: "site", entityId: siteId, detail: { ...parsed.totals } });
  return { ok: true, errors: [], errorCount: 0, warnings: parsed.warnings, totals: parsed.totals, preview };
}

export interface LayoutTree {
  blocks: { id: number; name: string; inverters: { id: number; name: string; combiners: { id: number; name: string; strings: number; modules: number }[] }[] }[];
  totals: LayoutTotals;
}

export async function layoutTree(siteId: string): Promise<LayoutTree> {
  const bs = await db().select().from(blocks).where(eq(blocks.siteId, siteId)).orderBy(asc(blocks.name));
  const ds = await db().select().from(devices).where(and(eq(devices.siteId, siteId), inArray(devices.kind, ["inverter", "combiner"]))).orderBy(asc(devices.name));
  const mods = await db().execute<{ combiner_id: number; modules: number; n: number }>(sql`
    select s.combiner_id, sum(s.modules)::int as modules, count(*)::int as n from strings s
    join devices d on d.id = s.combiner_id where d.site_id = ${siteId} group by s.combiner_id`);
  const modsBy = new Map(mods.rows.map((m) => [m.combiner_id, m]));
  const totals: LayoutTotals = { blocks: bs.length, inverters: 0, combiners: 0, strings: 0, modules: 0 };
  const tree = bs.map((b) => ({
    id: b.id,
    name: b.name,
    inverters: ds
      .filter((d) => d.kind === "inverter" && d.blockId === b.id)
      .map((inv) => {
        totals.inverters++;
        return {
          id: inv.id,
          name: inv.name,
          combiners: ds
            .filter((c) => c.kind === "combiner" && c.parentId === inv.id)
            .map((c) => {
              const m = modsBy.get(c.id);
              totals.combiners++;
              totals.strings += m?.n ?? 0;
              totals.modules += m?.modules ?? 0;
              return { id: c.id, name: c.name, strings: m?.n ?? c.stringCount ?? 0, modules: m?.modules ?? 0 };
            }),
        };
      }),
  }));
  return { blocks: tree, totals };
}

export interface DrawingString {
  id: number;
  combinerId: number;
  number: number;
  x: number;
  y: number;
}

/** Every string with a position, for the plant drawing. */
export async function drawingStrings(siteId: string): Promise<DrawingString[]> {
  const rows = await db().execute<{ id: number; combiner_id: number; number: number; x: number; y: number }>(sql`
    select s.id, s.combiner_id, s.number, s.x, s.y from strings s join devices d on d.id = s.combiner_id
    where d.site_id = ${siteId} and s.x is not null and s.y is not null order by s.combiner_id, s.number`);
  return rows.rows.map((r) => ({ id: r.id, combinerId: r.combiner_id, number: r.number, x: r.x, y: r.y }));
}
