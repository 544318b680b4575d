import { and, asc, eq, inArray, notInArray, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { blocks, devices, strings } from "~/db/schema";
import { parseLayoutCsv, type LayoutError, type LayoutTotals } from "~/domain/import/layout";
export { CONFIRM_DROP } from "~/domain/import/layout";
import { audit } from "~/services/audit.server";

export interface LayoutImportResult {
  ok: boolean;
  errors: LayoutError[];
  errorCount: number;
  warnings: LayoutError[];
  totals: LayoutTotals | null;
  preview: { block: string; inverter: string; combiner: string; string: string; modules: number; x: number | null; y: number | null }[];
  /**
   * Strings this layout removes that drone findings (deleted with their string) or open work
   * orders stand on. A commit without `confirmDropFindings` is refused with `message`
   * (ok false, nothing changed); a preview carries it as a warning.
   */
  drops?: { message: string; findings: number; workOrders: number };
}

class DropRefused extends Error {
  constructor(readonly drops: NonNullable<LayoutImportResult["drops"]>) {
    super(drops.message);
  }
}

type Q = Pick<ReturnType<typeof db>, "execute">;

/**
 * What removing strings would take with it: the drone findings on them (deleted with the string)
 * and the open work orders naming them. `removed` maps a combiner id to the string numbers the
 * file keeps for it; every other string of that combiner goes.
 */
async function dropsOf(q: Q, siteId: string, keep: Map<number, number[]>): Promise<LayoutImportResult["drops"]> {
  if (!keep.size) return undefined;
  const spec = JSON.stringify([...keep].map(([id, numbers]) => ({ id, numbers })));
  const found = await q.execute<{ combiner: string; number: number; flown: string }>(sql`
    with k as (select (e->>'id')::int as id, array(select jsonb_array_elements_text(e->'numbers')::int) as numbers from jsonb_array_elements(${spec}::jsonb) e)
    select d.name as combiner, s.number, to_char(fl.started_at at time zone st.timezone, 'FMDD Mon YYYY') as flown
      from k join strings s on s.combiner_id = k.id and not (s.number = any(k.numbers))
      join devices d on d.id = s.combiner_id
      join findings f on f.string_id = s.id
      join flights fl on fl.id = f.flight_id
      join sites st on st.id = ${siteId}
     order by d.name, s.number, fl.started_at`);
  const orders = await q.execute<{ number: number; combiner: string; strings: number[] }>(sql`
    with k as (select (e->>'id')::int as id, array(select jsonb_array_elements_text(e->'numbers')::int) as numbers from jsonb_array_elements(${spec}::jsonb) e)
    select w.number, d.name as combiner, array(select n from unnest(w.string_numbers) n where not (n = any(k.numbers)) order by n) as strings
      from work_orders w join k on k.id = w.combiner_id join devices d on d.id = w.combiner_id
     where w.site_id = ${siteId} and w.state not in ('done', 'cancelled')
       and exists (select 1 from unnest(w.string_numbers) n join strings s on s.combiner_id = w.combiner_id and s.number = n where not (n = any(k.numbers)))
     order by w.number`);
  const f = found.rows;
  const w = orders.rows;
  if (!f.length && !w.length) return undefined;
  const list = <T,>(xs: T[], show: (x: T) => string) => xs.slice(0, 10).map(show).join(", ") + (xs.length > 10 ? `, and ${xs.length - 10} more` : "");
  const parts: string[] = [];
  if (f.length)
    parts.push(
      `${f.length} drone finding${f.length === 1 ? " is" : "s are"} on strings this layout removes: ${list(f, (x) => `${x.combiner} string ${x.number} (flight ${x.flown})`)}.`,
    );
  if (w.length)
    parts.push(
      `${w.length} open work order${w.length === 1 ? " names" : "s name"} strings this layout removes: ${list(w, (x) => `#${x.number} (${x.combiner} string${x.strings.length === 1 ? "" : "s"} ${x.strings.join(", ")})`)}; ${w.length === 1 ? "it is" : "they are"} kept.`,
    );
  parts.push(f.length ? "Confirm to delete them, or keep those strings." : "Confirm to remove the strings, or keep them.");
  return { message: parts.join(" "), findings: f.length, workOrders: w.length };
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
  opts: { dryRun: boolean; confirmDropFindings?: boolean },
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
  if (opts.dryRun) {
    // The strings each combiner of the file keeps, by the combiners that exist already.
    const existing = await db()
      .select({ id: devices.id, name: devices.name })
      .from(devices)
      .where(and(eq(devices.siteId, siteId), eq(devices.kind, "combiner")));
    const byName = new Map(existing.map((d) => [d.name, d.id]));
    const keep = new Map<number, number[]>();
    for (const c of parsed.combiners) {
      const id = byName.get(c.name);
      if (id !== undefined) keep.set(id, parsed.rows.filter((r) => r.combiner === c.name).map((r) => Number(r.string)));
    }
    const drops = await dropsOf(db(), siteId, keep);
    return { ok: true, errors: [], errorCount: 0, warnings: parsed.warnings, totals: parsed.totals, preview, ...(drops ? { drops } : {}) };
  }

  try {
    await applyLayout(siteId, parsed, opts.confirmDropFindings === true);
  } catch (e) {
    if (e instanceof DropRefused) return { ok: false, errors: [], errorCount: 0, warnings: parsed.warnings, totals: parsed.totals, preview, drops: e.drops };
    throw e;
  }
  await audit({ orgId: actor.orgId, userId: actor.userId, action: "layout.import", entity: "site", entityId: siteId, detail: { ...parsed.totals } });
  return { ok: true, errors: [], errorCount: 0, warnings: parsed.warnings, totals: parsed.totals, preview };
}

type ParsedLayout = Extract<ReturnType<typeof parseLayoutCsv>, { ok: true }>;

/** One transaction; throws DropRefused (rolling everything back) when strings with findings would go unconfirmed. */
async function applyLayout(siteId: string, parsed: ParsedLayout, confirmed: boolean): Promise<void> {
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
    const keeps = new Map<number, number[]>();
    for (const [name, id] of combinerIds) keeps.set(id, parsed.rows.filter((r) => r.combiner === name).map((r) => Number(r.string)));
    // Findings go with their string (cascade): not without the engineer's say-so.
    if (!confirmed) {
      const drops = await dropsOf(tx, siteId, keeps);
      if (drops) throw new DropRefused(drops);
    }
    for (const [id, keep] of keeps) {
      await tx.delete(strings).where(and(eq(strings.combinerId, id), notInArray(strings.number, keep)));
    }
  });
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
