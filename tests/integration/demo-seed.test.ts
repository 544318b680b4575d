/**
 * The demo seed's own loading path (site, layout, monthly exports through the import job) on a
 * small generated plant: the database holds what the generator's truth file says.
 */
import { describe, expect, it } from "vitest";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { sql } from "drizzle-orm";
import { createOrg, db } from "../helpers/db";
import { generate } from "../../seeds/generate";
import { loadDemoSite } from "../../seeds/load-plant";
import { loadDemoReadings } from "../../seeds/load-readings";

describe("demo seed path", () => {
  it("loads a generated plant whose counts of blocks, combiners, strings and days match its truth file", async () => {
    const dir = mkdtempSync(join(tmpdir(), "sunsift-demo-"));
    try {
      generate({ out: dir, combiners: 24, days: 6, end: "2026-11-20", nightRows: false });
      const truth = JSON.parse(readFileSync(join(dir, "truth.json"), "utf8")) as {
        plant: { blocks: number; inverters: number; combiners: number; strings: number };
        period: { start: string; end: string; days: number };
      };
      const { org, people } = await createOrg("Seed");
      const { siteId } = await loadDemoSite(db, { orgId: org.id, adminUserId: people.admin.id, ownerUserId: people.owner.id, dir });
      const r = await loadDemoReadings({ orgId: org.id, siteId, engineerUserId: people.engineer.id, dir, log: () => {} });
      expect(r.readings).toBeGreaterThan(0);

      const counts = await db.execute<{ blocks: number; inverters: number; combiners: number; strings: number }>(sql`
        select (select count(*)::int from blocks where site_id = ${siteId}) as blocks,
               (select count(*)::int from devices where site_id = ${siteId} and kind = 'inverter') as inverters,
               (select count(*)::int from devices where site_id = ${siteId} and kind = 'combiner') as combiners,
               (select count(*)::int from strings s join devices d on d.id = s.combiner_id where d.site_id = ${siteId}) as strings`);
      expect(counts.rows[0]).toEqual({ blocks: truth.plant.blocks, inverters: truth.plant.inverters, combiners: truth.plant.combiners, strings: truth.plant.strings });

      // Every combiner has current on every day of the period, in the site's own calendar.
      const days = await db.execute<{ days: number; first: string; last: string; combiners: number }>(sql`
        select count(distinct (r.ts at time zone 'Europe/Madrid')::date)::int as days,
               min((r.ts at time zone 'Europe/Madrid')::date)::text as first,
               max((r.ts at time zone 'Europe/Madrid')::date)::text as last,
               count(distinct r.device_id)::int as combiners
        from readings r join devices d on d.id = r.device_id
        where d.site_id = ${siteId} and d.kind = 'combiner' and r.metric = 1`);
      expect(days.rows[0]).toEqual({ days: truth.period.days, first: truth.period.start, last: truth.period.end, combiners: truth.plant.combiners });
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
