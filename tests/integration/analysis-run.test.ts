/**
 * The analysis run end to end on fixture plants loaded straight into a test site:
 * fixtures/small (one open string of 12 on B1-I1-C03) and fixtures/healthy-cloudy (no fault,
 * real MIDC 2018-10-14 cloudy day). Expected outcomes come from the fixtures' truth.json.
 */
import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { runAnalysis } from "../../app/models/analysis.server";
import { createOrg, db, pool } from "../helpers/db";
import { loadFixture } from "./analysis-fixtures";

async function flagsOf(siteId: string) {
  return db.select().from(schema.flags).where(eq(schema.flags.siteId, siteId));
}

/**
 * Runs the analysis of a site while writes of `op` on `table` that match `when` (a condition on
 * `new`) raise `message`, and checks that the run fails with it and is recorded as failed.
 */
async function expectRunToFailOn(siteId: string, table: string, op: string, when: string, message: string) {
  const fn = `fail_${table}_${siteId.replaceAll("-", "")}`;
  await pool.query(`create function ${fn}() returns trigger language plpgsql as $$ begin
    if ${when} then raise exception '${message}'; end if; return new; end $$`);
  await pool.query(`create trigger ${fn} before ${op} on ${table} for each row execute function ${fn}()`);
  try {
    await expect(runAnalysis(siteId, { trigger: "manual" })).rejects.toThrow(message);
  } finally {
    await pool.query(`drop trigger ${fn} on ${table}; drop function ${fn}()`);
  }
  const runs = await db.select().from(schema.analysisRuns).where(eq(schema.analysisRuns.siteId, siteId));
  const last = runs.sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime())[0]!;
  expect(last.status).toBe("failed");
  expect(last.error).toContain(message);
}

describe("analysis on fixtures/small (one open string of 12, five copies of the clear day)", () => {
  it("flags B1-I1-C03 with one string out, and nothing else", async () => {
    const { site } = await createOrg("AnSmall");
    const { devices, days } = await loadFixture(site.id, "small", { copies: 5 });
    const { stats } = await runAnalysis(site.id, { trigger: "manual" });
    expect(stats?.days).toBe(5);
    expect(stats?.fromDay).toBe(days[0]);

    const c03 = devices.get("B1-I1-C03")!;
    const cd = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, c03));
    expect(cd).toHaveLength(5);
    for (const d of cd) {
      // DOMAIN.md §10 formula: k = N(1 − r), r = 11/12 → deficit ≈ 1 string (truth.json expectedRatio 0.9167)
      expect(d.stringsOut!).toBeGreaterThan(0.7);
      expect(d.stringsOut!).toBeLessThan(1.3);
      expect(d.robustZ!).toBeLessThan(-3.5);
      expect(d.validIntervals).toBeGreaterThan(10);
      // one string = 28 × 550 W = 15.4 kWp; a clear mid-October day at 37° N on a 30° south plane
      // gives ~6–6.5 kWh/m² (PVWatts-style estimate, from memory) → roughly 60–100 kWh lost a day
      expect(d.lostKwh!).toBeGreaterThan(50);
      expect(d.lostKwh!).toBeLessThan(110);
    }
    const fl = await flagsOf(site.id);
    expect(fl.map((f) => f.combinerId)).toEqual([c03]);
    expect(fl[0]!.stringsOut).toBe(1);
    expect(fl[0]!.state).toBe("new");
    expect(fl[0]!.open).toBe(true);
    expect(fl[0]!.confidence).toBeGreaterThan(0.5);
    expect(fl[0]!.firstDay).toBe(days[0]);
    expect(fl[0]!.lastDay).toBe(days[4]);
    expect(fl[0]!.lostKwhToDate).toBeCloseTo(cd.reduce((s, d) => s + d.lostKwh!, 0), 3);

    // healthy combiners: no flag, small deficits
    for (const name of ["B1-I1-C01", "B1-I1-C02", "B1-I1-C04"]) {
      const rows = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, devices.get(name)!));
      for (const r of rows) expect(Math.abs(r.stringsOut!)).toBeLessThan(0.5);
    }

    // a re-run keeps one flag; a dismissed flag stays dismissed with its reason
    await db.update(schema.flags).set({ state: "dismissed", stateReason: "known, contractor booked" }).where(eq(schema.flags.id, fl[0]!.id));
    await runAnalysis(site.id, { trigger: "manual", fromDay: days[4], toDay: days[4] });
    const again = await flagsOf(site.id);
    expect(again).toHaveLength(1);
    expect(again[0]!.state).toBe("dismissed");
    expect(again[0]!.stateReason).toBe("known, contractor booked");
  });

  it("one day alone is not enough for the 3-of-5 rule: no flag yet", async () => {
    const { site } = await createOrg("AnOneDay");
    await loadFixture(site.id, "small", { copies: 1 });
    await runAnalysis(site.id, { trigger: "manual" });
    expect(await flagsOf(site.id)).toHaveLength(0);
  });

  it("a communication gap on the faulted combiner is a gap, never a fault; zero current is", async () => {
    const { site } = await createOrg("AnGap");
    // C02 silent for the whole of days 1–3 (no readings); C04 reads 0 A all day on days 0–4
    const { devices } = await loadFixture(site.id, "small", {
      copies: 5,
      tweak: (device, metric, v, k) => (device === "B1-I1-C02" && k >= 1 && k <= 3 ? null : device === "B1-I1-C04" && metric === "dc_current" ? 0 : v),
    });
    await runAnalysis(site.id, { trigger: "manual" });
    const fl = await flagsOf(site.id);
    const byId = new Map(fl.map((f) => [f.combinerId, f]));
    expect(byId.has(devices.get("B1-I1-C02")!)).toBe(false);
    expect(byId.get(devices.get("B1-I1-C04")!)?.stringsOut).toBe(12);
    const c02 = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, devices.get("B1-I1-C02")!));
    const gapDays = c02.filter((d) => d.validIntervals === 0);
    expect(gapDays).toHaveLength(3);
    for (const d of gapDays) expect(d.lossClass).toBe("data_quality");
  });
});

describe("the stale-current rule at its edges (a run of one value lasting ≥ 45 min, gaps of up to two intervals allowed)", () => {
  // The rule: NREL PV Fleets QA pipeline / pvanalytics docs (DOMAIN.md §11): values rounded to 2
  // decimals, runs of ≥ 3 identical values at 15-minute data, scaled by duration to ≥ 45 min,
  // daytime only. Allowing gaps of up to two intervals inside a run is our own choice.
  it("marks 9 equal 5-minute readings (45 min) and 5 equal readings 10 min apart (45 min), not 8 (40 min), not zeros", async () => {
    const { site } = await createOrg("AnStale");
    // B1-I1-C01's current frozen at its 12:30 value (local, +02:00) from 12:30: day 0 for 9 readings,
    // day 1 for 8, day 2 for 12:30, 12:40 … 13:10 with the readings between missing, day 3 at 0 A.
    const frozen = new Map<number, number>();
    const { devices } = await loadFixture(site.id, "small", {
      copies: 4,
      tweak: (device, metric, v, k, ts) => {
        if (device !== "B1-I1-C01" || metric !== "dc_current") return v;
        const min = ts.getUTCHours() * 60 + ts.getUTCMinutes() - (10 * 60 + 30);
        const runMinutes = k === 1 ? 35 : 40;
        if (min < 0 || min > runMinutes) return v;
        if (k === 3) return 0;
        if (k === 2 && min % 10 !== 0) return null;
        if (!frozen.has(k)) frozen.set(k, v);
        return frozen.get(k)!;
      },
    });
    await runAnalysis(site.id, { trigger: "manual" });
    const rows = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, devices.get("B1-I1-C01")!));
    const byDay = rows.sort((a, b) => a.day.localeCompare(b.day)).map((r) => r.excluded as Record<string, number>);
    expect(byDay.map((e) => e.stale ?? 0)).toEqual([9, 0, 5, 0]);
    expect(byDay[3]!.zero_current).toBeGreaterThanOrEqual(9);
    // the neighbours are untouched
    const c02 = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, devices.get("B1-I1-C02")!));
    expect(c02.map((r) => (r.excluded as Record<string, number>).stale ?? 0)).toEqual([0, 0, 0, 0]);
  });
});

describe("peer groups by string count (one inverter's four 12-string combiners: the same members as by inverter)", () => {
  it("give the same daily results as peer groups by inverter, and store the group's band under the string count", async () => {
    const byInverter = await createOrg("AnPeerInv");
    const byCount = await createOrg("AnPeerCount");
    const a = await loadFixture(byInverter.site.id, "small", { copies: 2 });
    const b = await loadFixture(byCount.site.id, "small", { copies: 2 });
    const [site] = await db.select().from(schema.sites).where(eq(schema.sites.id, byCount.site.id));
    const settings = { ...site!.settings, thresholds: { ...site!.settings.thresholds, peerGroup: "string_count" as const } };
    await db.update(schema.sites).set({ settings }).where(eq(schema.sites.id, byCount.site.id));
    await runAnalysis(byInverter.site.id, { trigger: "manual" });
    await runAnalysis(byCount.site.id, { trigger: "manual" });
    for (const name of ["B1-I1-C01", "B1-I1-C02", "B1-I1-C03", "B1-I1-C04"]) {
      const ra = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, a.devices.get(name)!));
      const rb = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.combinerId, b.devices.get(name)!));
      const key = (r: typeof ra) => r.sort((x, y) => x.day.localeCompare(y.day)).map((d) => [d.day, d.validIntervals, d.outputIndex, d.robustZ, d.stringsOut, d.lostKwh, d.excluded]);
      expect(ra).toHaveLength(2);
      // same members, same arithmetic: equal to the last bit except the energy sum's order of addition
      const [ka, kb] = [key(ra), key(rb)];
      for (let i = 0; i < ka.length; i++) {
        expect(kb[i]!.slice(0, 5)).toEqual(ka[i]!.slice(0, 5));
        expect(kb[i]![5] as number).toBeCloseTo(ka[i]![5] as number, 9);
        expect(kb[i]![6]).toEqual(ka[i]![6]);
      }
    }
    const bands = await pool.query<{ group_key: number; n: number }>(
      `select group_key, sum(cardinality(ts))::int n from peer_days where site_id = $1 group by group_key`,
      [byCount.site.id],
    );
    expect(bands.rows).toHaveLength(1);
    expect(bands.rows[0]!.group_key).toBe(12);
    expect(bands.rows[0]!.n).toBeGreaterThan(100);
  });
});

describe("analysis on fixtures/healthy-cloudy (real cloudy day, no fault)", () => {
  it("raises zero flags over five copies of the cloudy day", async () => {
    const { site } = await createOrg("AnCloudy");
    await loadFixture(site.id, "healthy-cloudy", { copies: 5 });
    const { stats } = await runAnalysis(site.id, { trigger: "manual" });
    expect(stats?.combiners).toBe(8);
    // passing clouds: the ramp rule must have removed intervals
    expect(stats?.siteExcluded.ramp ?? 0).toBeGreaterThan(0);
    expect(await flagsOf(site.id)).toHaveLength(0);
    expect(stats?.timestampAudit?.proposal).toBe("timestamps agree with the sun");
  });
});

describe("a run that fails part-way", () => {
  it("is marked failed with the reason; the failing day keeps its old rows whole; a later run puts it right", async () => {
    const { site } = await createOrg("AnFail");
    const { days } = await loadFixture(site.id, "small", { copies: 3 });
    await runAnalysis(site.id, { trigger: "manual" });
    const before = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.siteId, site.id));
    // Mark every stored day so a rewrite shows, then make the middle day's write fail.
    await db.update(schema.combinerDays).set({ lostKwh: -1 }).where(eq(schema.combinerDays.siteId, site.id));
    await expectRunToFailOn(site.id, "combiner_days", "insert or update", `new.site_id = '${site.id}' and new.day = '${days[1]}'`, "disk full (test)");
    const after = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.siteId, site.id));
    expect(after).toHaveLength(before.length);
    // The failing day kept all its old rows: its unit rolled back whole, nothing half-written.
    const failedDay = after.filter((d) => d.day === days[1]);
    expect(failedDay.length).toBeGreaterThan(0);
    expect(failedDay.every((d) => d.lostKwh === -1)).toBe(true);
    // A later run puts everything right.
    await runAnalysis(site.id, { trigger: "manual" });
    const fixed = await db.select().from(schema.combinerDays).where(eq(schema.combinerDays.siteId, site.id));
    expect(fixed.every((d) => d.lostKwh !== -1)).toBe(true);
  });

  it("is marked failed when the site conditions cannot be stored (written while the units run), and keeps the stored ones", async () => {
    const { site } = await createOrg("AnFailEnv");
    await loadFixture(site.id, "small", { copies: 2 });
    await runAnalysis(site.id, { trigger: "manual" });
    const stored = async () =>
      (await pool.query<{ n: number; poa: number }>(`select count(*)::int n, sum(poa) poa from analysis_intervals where site_id = $1`, [site.id])).rows[0]!;
    const before = await stored();
    expect(before.n).toBeGreaterThan(0);
    await expectRunToFailOn(site.id, "analysis_intervals", "insert", `new.site_id = '${site.id}'`, "no room for the conditions (test)");
    // The delete before the failed insert was rolled back with it.
    expect(await stored()).toEqual(before);
  });
});
