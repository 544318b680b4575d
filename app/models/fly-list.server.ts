/**
 * Fly list: blocks ranked by the loss no finding explains yet (flags that need a flight), with
 * per block the combiners and strings to look at, and the flight windows of the next days.
 */
import { and, eq, inArray, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { blocks, devices, flags, flights } from "~/db/schema";
import { flightTimeline, localMidnightUtc, type TimelineDay } from "~/domain/flight-timeline";
import type { Site } from "~/db/schema";
import { flightDay } from "./flights.server";

export interface FlyListCombiner {
  flagId: string;
  combiner: string;
  combinerId: number;
  stringCount: number | null;
  stringsOut: number;
  lostKwhPerDay: number;
  unexplainedKwhPerDay: number;
  explainedFraction: number;
  firstDay: string;
  state: string;
  /** Strings to look at: those a partial finding names first, else every string of the combiner. */
  strings: number[];
  narrowed: boolean;
  /** Extent of the combiner's strings on the layout grid, metres. */
  area: { xMin: number; xMax: number; yMin: number; yMax: number } | null;
}

export interface FlyListBlock {
  blockId: number | null;
  block: string;
  rank: number;
  flags: number;
  unexplainedKwhPerDay: number;
  unexplainedMoneyPerDay: number;
  lastFlown: string | null;
  combiners: FlyListCombiner[];
}

/** States that still ask for a flight: not explained and nobody has taken them further. */
const NEEDS = ["new", "needs flight"] as const;

export async function flyList(site: Site): Promise<{ blocks: FlyListBlock[]; totalUnexplainedKwhPerDay: number; currency: string }> {
  const rows = await db()
    .select({ f: flags, combiner: devices.name, stringCount: devices.stringCount, blockId: devices.blockId, block: blocks.name })
    .from(flags)
    .innerJoin(devices, eq(devices.id, flags.combinerId))
    .leftJoin(blocks, eq(blocks.id, devices.blockId))
    .where(and(eq(flags.siteId, site.id), eq(flags.open, true), inArray(flags.state, [...NEEDS])));
  const combinerIds = rows.map((r) => r.f.combinerId);
  const areas = new Map<number, { xMin: number; xMax: number; yMin: number; yMax: number; numbers: number[] }>();
  if (combinerIds.length) {
    const r = await db().execute<{ combiner_id: number; x_min: number | null; x_max: number | null; y_min: number | null; y_max: number | null; numbers: number[] }>(sql`
      select combiner_id, min(x) x_min, max(x) x_max, min(y) y_min, max(y) y_max, array_agg(number order by number) numbers
      from strings where combiner_id in (${sql.join(combinerIds.map((id) => sql`${id}`), sql`, `)}) group by combiner_id`);
    for (const a of r.rows) areas.set(a.combiner_id, { xMin: a.x_min ?? NaN, xMax: a.x_max ?? NaN, yMin: a.y_min ?? NaN, yMax: a.y_max ?? NaN, numbers: a.numbers });
  }
  // Strings a partial finding named (flag still short of the threshold): look at those first.
  const partial = new Map<number, number[]>();
  if (combinerIds.length) {
    const r = await db().execute<{ combiner_id: number; numbers: number[] }>(sql`
      select combiner_id, array_agg(distinct string_number order by string_number) numbers from findings
      where site_id = ${site.id} and combiner_id in (${sql.join(combinerIds.map((id) => sql`${id}`), sql`, `)}) group by combiner_id`);
    for (const p of r.rows) partial.set(p.combiner_id, p.numbers);
  }
  const flown = await db().select({ blockIds: flights.blockIds, startedAt: flights.startedAt }).from(flights).where(eq(flights.siteId, site.id));
  const lastFlown = new Map<number, string>();
  for (const f of flown) for (const b of f.blockIds) {
    const d = flightDay(f.startedAt, site.timezone);
    if ((lastFlown.get(b) ?? "") < d) lastFlown.set(b, d);
  }
  const tariff = site.settings.tariffPerMwh / 1000;
  const byBlock = new Map<string, FlyListBlock>();
  for (const r of rows) {
    const key = r.block ?? "—";
    let b = byBlock.get(key);
    if (!b) {
      b = { blockId: r.blockId, block: key, rank: 0, flags: 0, unexplainedKwhPerDay: 0, unexplainedMoneyPerDay: 0, lastFlown: r.blockId != null ? (lastFlown.get(r.blockId) ?? null) : null, combiners: [] };
      byBlock.set(key, b);
    }
    const fraction = r.f.explainedFraction ?? 0;
    const unexplained = r.f.lostKwhPerDay * Math.max(0, 1 - fraction);
    const area = areas.get(r.f.combinerId);
    const named = partial.get(r.f.combinerId) ?? [];
    b.flags++;
    b.unexplainedKwhPerDay += unexplained;
    b.unexplainedMoneyPerDay += unexplained * tariff;
    b.combiners.push({
      flagId: r.f.id,
      combiner: r.combiner,
      combinerId: r.f.combinerId,
      stringCount: r.stringCount,
      stringsOut: r.f.stringsOut,
      lostKwhPerDay: r.f.lostKwhPerDay,
      unexplainedKwhPerDay: unexplained,
      explainedFraction: fraction,
      firstDay: r.f.firstDay,
      state: r.f.state,
      strings: named.length ? named : (area?.numbers ?? []),
      narrowed: named.length > 0,
      area: area && Number.isFinite(area.xMin) ? { xMin: area.xMin, xMax: area.xMax, yMin: area.yMin, yMax: area.yMax } : null,
    });
  }
  const list = [...byBlock.values()].sort((a, b) => b.unexplainedKwhPerDay - a.unexplainedKwhPerDay || a.block.localeCompare(b.block));
  list.forEach((b, i) => {
    b.rank = i + 1;
    b.combiners.sort((x, y) => y.unexplainedKwhPerDay - x.unexplainedKwhPerDay || x.combiner.localeCompare(y.combiner));
  });
  return { blocks: list, totalUnexplainedKwhPerDay: list.reduce((s, b) => s + b.unexplainedKwhPerDay, 0), currency: site.settings.currency };
}

/** Flight windows for the next `days` local days from today (or `fromDay`) at the site. */
export function siteFlightWindows(site: Site, opts: { fromDay?: string; days?: number; pitchDeg?: number } = {}): TimelineDay[] {
  const s = site.settings;
  const today = opts.fromDay ?? localToday(site.timezone);
  return flightTimeline(today, { lat: s.latitude, lon: s.longitude, elevationM: s.elevation, timezone: site.timezone, mounting: s.mounting }, {
    days: opts.days ?? 7,
    stepMinutes: 15,
    minPoa: s.thresholds.irMinPoa,
    pitchBelowHorizonDeg: opts.pitchDeg ?? 70,
  });
}

export function localToday(zone: string): string {
  const now = Date.now();
  // The local day whose midnight is the latest one not after now.
  const guess = new Date(now).toISOString().slice(0, 10);
  for (const d of [addDays(guess, 1), guess, addDays(guess, -1)]) if (localMidnightUtc(d, zone) <= now) return d;
  return guess;
}

function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}
