/**
 * Loads a fixture plant (fixtures/<name>: site.json, layout.csv, mapping.json, readings-*.csv)
 * straight into a test organisation's site — devices, strings and readings by multi-row insert —
 * without the import screens, so the analysis tests do not depend on them. `copies` repeats the
 * fixture's day(s) on the following days (same weather, same faults) to exercise the N-of-M rule.
 */
import { readFileSync, readdirSync } from "node:fs";
import { eq, sql } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { metricCode } from "../../app/db/unmanaged/readings";
import { siteSettingsSchema } from "../../app/domain/site-settings";
import type { Metric } from "../../app/domain/import/metrics";
import { db, pool } from "../helpers/db";

const UNIT_FACTOR: Record<string, number> = { kW: 1000, W: 1, A: 1, "W/m2": 1, degC: 1, "m/s": 1, V: 1 };

export interface Loaded {
  devices: Map<string, number>;
  days: string[];
}

export async function loadFixture(siteId: string, name: string, opts: { copies?: number; tweak?: (device: string, metric: Metric, v: number, dayIndex: number, ts: Date) => number | null } = {}): Promise<Loaded> {
  const dir = new URL(`../../fixtures/${name}/`, import.meta.url);
  const site = JSON.parse(readFileSync(new URL("site.json", dir), "utf8"));
  const settings = siteSettingsSchema.parse(site);
  await db.update(schema.sites).set({ settings, timezone: settings.timezone, latitude: settings.latitude, longitude: settings.longitude }).where(eq(schema.sites.id, siteId));

  const layout = readFileSync(new URL("layout.csv", dir), "utf8").trim().split(/\r?\n/).slice(1).map((l) => l.split(","));
  const devices = new Map<string, number>();
  const blockIds = new Map<string, number>();
  for (const [block] of layout) {
    if (blockIds.has(block!)) continue;
    const [b] = await db.insert(schema.blocks).values({ siteId, name: block! }).returning();
    blockIds.set(block!, b!.id);
  }
  const inverterBlock = new Map(layout.map((r) => [r[1]!, r[0]!]));
  for (const [inv, block] of inverterBlock) {
    const [d] = await db.insert(schema.devices).values({ siteId, kind: "inverter", name: inv, blockId: blockIds.get(block)! }).returning();
    devices.set(inv, d!.id);
  }
  const combiners = new Map<string, { inv: string; block: string; strings: string[][] }>();
  for (const r of layout) {
    const c = combiners.get(r[2]!) ?? { inv: r[1]!, block: r[0]!, strings: [] };
    c.strings.push(r);
    combiners.set(r[2]!, c);
  }
  for (const [name, c] of combiners) {
    const [d] = await db
      .insert(schema.devices)
      .values({ siteId, kind: "combiner", name, blockId: blockIds.get(c.block)!, parentId: devices.get(c.inv)!, stringCount: c.strings.length })
      .returning();
    devices.set(name, d!.id);
    await db.insert(schema.strings).values(c.strings.map((s) => ({ combinerId: d!.id, number: Number(s[3]), modules: Number(s[4]), x: Number(s[5]), y: Number(s[6]) })));
  }
  for (const m of settings.metStations) {
    const [d] = await db.insert(schema.devices).values({ siteId, kind: "met", name: m }).returning();
    devices.set(m, d!.id);
  }

  const mapping: { header: string; device: string; metric: Metric; unit: string }[] = JSON.parse(readFileSync(new URL("mapping.json", dir), "utf8"));
  const copies = opts.copies ?? 1;
  const days = new Set<string>();
  for (const file of readdirSync(dir).filter((f) => f.startsWith("readings-")).sort()) {
    const lines = readFileSync(new URL(file, dir), "utf8").trim().split(/\r?\n/);
    const header = lines[0]!.split(",");
    const cols = header.slice(1).map((h) => mapping.find((m) => m.header === h)!);
    const dev: number[] = [];
    const met: number[] = [];
    const ts: string[] = [];
    const val: number[] = [];
    for (let k = 0; k < copies; k++) {
      for (const line of lines.slice(1)) {
        const cells = line.split(",");
        const t = new Date(Date.parse(cells[0]!) + k * 86_400_000);
        const d0 = new Date(`${cells[0]!.slice(0, 10)}T00:00:00Z`);
        days.add(new Date(d0.getTime() + k * 86_400_000).toISOString().slice(0, 10));
        cols.forEach((m, i) => {
          const raw = cells[i + 1];
          if (raw == null || raw === "") return;
          let v = Number(raw) * (UNIT_FACTOR[m.unit] ?? 1);
          if (opts.tweak) {
            const tv = opts.tweak(m.device, m.metric, v, k, t);
            if (tv == null) return;
            v = tv;
          }
          dev.push(devices.get(m.device)!);
          met.push(metricCode(m.metric));
          ts.push(t.toISOString());
          val.push(v);
        });
      }
    }
    await db.execute(sql`select ensure_reading_partitions(${ts[0]!}::timestamptz, ${ts[ts.length - 1]!}::timestamptz)`);
    for (let i = 0; i < dev.length; i += 20_000) {
      await pool.query(
        `insert into readings (device_id, metric, ts, value) select * from unnest($1::int[], $2::smallint[], $3::timestamptz[], $4::real[])
         on conflict do nothing`,
        [dev.slice(i, i + 20_000), met.slice(i, i + 20_000), ts.slice(i, i + 20_000), val.slice(i, i + 20_000)],
      );
    }
  }
  return { devices, days: [...days].sort() };
}
