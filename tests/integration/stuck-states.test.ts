/**
 * Work that would stay "queued" or "running" for ever (its job lost, its process or connection
 * gone before it could record a failure) is swept by the worker and marked failed with a plain
 * reason; work that is merely young, or still held by a live run, is left alone.
 */
import { afterAll, describe, expect, it } from "vitest";
import { eq, inArray, sql } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { importReadingsJob, QUEUED_TOO_LONG, sweepInterruptedImports } from "../../app/jobs/import-readings.server";
import { ANALYSIS_INTERRUPTED, ANALYSIS_NOT_STARTED, sweepStuckRuns } from "../../app/jobs/analysis.server";
import { newObjectKey, putObject } from "../../app/services/storage.server";
import { createOrg, db, pool } from "../helpers/db";
import { siteWithLayout } from "../helpers/imports";

const minutesAgo = (m: number) => new Date(Date.now() - m * 60_000);

afterAll(async () => {
  await pool.end();
});

describe("stuck imports and analysis runs", () => {
  it("attack: an import left queued (its job lost) is failed after 30 minutes with a plain reason; a fresh one is left alone, and a late job does not run the failed one", async () => {
    const org = await siteWithLayout("StuckQueued");
    const body = Buffer.from("timestamp,device,metric,value\n2026-01-01T10:00:00Z,B1-I1-C01,dc_current,5.5\n");
    const objectKey = newObjectKey(`imports/${org.site.id}`, "stuck.csv");
    await putObject(objectKey, body, body.length);
    const base = { orgId: org.org.id, siteId: org.site.id, kind: "readings" as const, status: "queued" as const, fileName: "stuck.csv", objectKey, sizeBytes: body.length };
    const [old, fresh, legacy] = await db
      .insert(schema.imports)
      .values([
        { ...base, startedAt: minutesAgo(31) },
        { ...base, startedAt: minutesAgo(2) },
        // Queued before started_at was set at queue time: its creation counts.
        { ...base, startedAt: null, createdAt: minutesAgo(45) },
      ])
      .returning();
    await sweepInterruptedImports(60);
    const rows = new Map((await db.select().from(schema.imports).where(inArray(schema.imports.id, [old!.id, fresh!.id, legacy!.id]))).map((r) => [r.id, r]));
    expect(rows.get(old!.id)).toMatchObject({ status: "failed", error: QUEUED_TOO_LONG, readingsLoaded: 0 });
    expect(rows.get(old!.id)!.finishedAt).not.toBeNull();
    expect(rows.get(legacy!.id)).toMatchObject({ status: "failed", error: QUEUED_TOO_LONG });
    expect(rows.get(fresh!.id)).toMatchObject({ status: "queued", error: null, finishedAt: null });
    // Its job turning up late does not load it behind the operator's back.
    await importReadingsJob({ importId: old!.id });
    const [after] = await db.select().from(schema.imports).where(eq(schema.imports.id, old!.id));
    expect(after).toMatchObject({ status: "failed", error: QUEUED_TOO_LONG, readingsLoaded: 0 });
    const n = await db.execute<{ n: number }>(sql`select count(*)::int n from readings r join devices d on d.id = r.device_id where d.site_id = ${org.site.id}`);
    expect(n.rows[0]!.n).toBe(0);
  });

  it("attack: an analysis run left running (its failure could not be recorded) or queued is failed after 30 minutes; fresh runs and a run holding its site's lock are left alone", async () => {
    const a = await createOrg("StuckRunA");
    const b = await createOrg("StuckRunB");
    const run = (siteId: string, status: "queued" | "running", createdAt: Date) => ({ siteId, status, trigger: "manual" as const, createdAt });
    const [lostRunning, lostQueued, freshRunning, freshQueued] = await db
      .insert(schema.analysisRuns)
      .values([run(a.site.id, "running", minutesAgo(40)), run(a.site.id, "queued", minutesAgo(31)), run(a.site.id, "running", minutesAgo(3)), run(a.site.id, "queued", minutesAgo(1))])
      .returning();
    // A long run of site B, still at work: its connection holds the site's analysis lock.
    const [longRun] = await db.insert(schema.analysisRuns).values(run(b.site.id, "running", minutesAgo(50))).returning();
    const holder = await pool.connect();
    try {
      await holder.query("select pg_advisory_lock(hashtext('analysis:' || $1))", [b.site.id]);
      await sweepStuckRuns();
    } finally {
      await holder.query("select pg_advisory_unlock(hashtext('analysis:' || $1))", [b.site.id]);
      holder.release();
    }
    const ids = [lostRunning!, lostQueued!, freshRunning!, freshQueued!, longRun!].map((r) => r.id);
    const rows = new Map((await db.select().from(schema.analysisRuns).where(inArray(schema.analysisRuns.id, ids))).map((r) => [r.id, r]));
    expect(rows.get(lostRunning!.id)).toMatchObject({ status: "failed", error: ANALYSIS_INTERRUPTED });
    expect(rows.get(lostRunning!.id)!.finishedAt).not.toBeNull();
    expect(rows.get(lostQueued!.id)).toMatchObject({ status: "failed", error: ANALYSIS_NOT_STARTED });
    expect(rows.get(freshRunning!.id)).toMatchObject({ status: "running", error: null });
    expect(rows.get(freshQueued!.id)).toMatchObject({ status: "queued", error: null });
    expect(rows.get(longRun!.id)).toMatchObject({ status: "running", error: null });
    // Tidy: the fresh rows would otherwise be swept by the test worker later, which is fine, but
    // leave nothing running that other tests might read as this site's latest run.
    await db.update(schema.analysisRuns).set({ status: "failed", error: "test" }).where(inArray(schema.analysisRuns.id, [freshRunning!.id, freshQueued!.id, longRun!.id]));
  });
});
