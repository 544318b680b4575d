/**
 * The job queue when it cannot start (PostgreSQL unreachable, a wrong connection string): a failed
 * start is not kept for the life of the process, and nothing it should have queued stays queued.
 * The queue's connection string is switched by a stand-in for env() (the database pool is opened
 * first, with the real one).
 */
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { eq } from "drizzle-orm";

const state = vi.hoisted(() => ({ url: null as string | null }));
vi.mock("~/env.server", async (importOriginal) => {
  const real = await importOriginal<typeof import("../../app/env.server")>();
  return { ...real, env: () => ({ ...real.env(), ...(state.url ? { DATABASE_URL: state.url } : {}) }) };
});

import * as schema from "../../app/db/schema";
import { db as appDb } from "../../app/db/client.server";
import { boss, closeQueue, enqueue, QUEUE_RETRY_MS } from "../../app/jobs/queue.server";
import { ANALYSIS_NOT_QUEUED, queueAnalysis } from "../../app/jobs/analysis.server";
import { inspectImport, QUEUE_DOWN, startImport } from "../../app/models/imports.server";
import { newObjectKey, putObject } from "../../app/services/storage.server";
import { db } from "../helpers/db";
import { siteWithLayout } from "../helpers/imports";

const BROKEN = "postgres://app@127.0.0.1:1/sunsift_nowhere";

beforeAll(async () => {
  // The app's pool is made now, with the real connection string; only the queue sees the broken one.
  await appDb().select().from(schema.sites).limit(1);
});

afterAll(async () => {
  state.url = null;
  await closeQueue();
});

async function uploadedImport(label: string) {
  const org = await siteWithLayout(label);
  const body = Buffer.from("timestamp,device,metric,value\n2026-01-01T10:00:00Z,B1-I1-C01,dc_current,5.5\n2026-01-01T10:05:00Z,B1-I1-C01,dc_current,5.6\n");
  const objectKey = newObjectKey(`imports/${org.site.id}`, "q.csv");
  await putObject(objectKey, body, body.length);
  const [imp] = await db
    .insert(schema.imports)
    .values({ orgId: org.org.id, siteId: org.site.id, kind: "readings", status: "uploaded", fileName: "q.csv", objectKey, sizeBytes: body.length })
    .returning();
  return { org, imp: imp! };
}

describe("job queue start", () => {
  it("attack: a job queue that failed to start once is tried again (not broken for the life of the process)", async () => {
    await closeQueue();
    state.url = BROKEN;
    await expect(boss()).rejects.toThrow();
    // Within the backoff the next call waits, then tries again (and fails again: still broken).
    const t0 = Date.now();
    await expect(enqueue("analysis", { siteId: crypto.randomUUID() })).rejects.toThrow();
    expect(Date.now() - t0).toBeGreaterThanOrEqual(QUEUE_RETRY_MS - 100);
    // The database is reachable again: the next call starts the queue and it works.
    state.url = null;
    const b = await boss();
    expect(await b.getQueue("analysis")).toMatchObject({ name: "analysis" });
    expect(boss()).toBe(boss());
    await closeQueue();
  });

  it("attack: an import whose job cannot be queued is marked failed at once, not left queued for ever", async () => {
    const { org, imp } = await uploadedImport("QueueDownImport");
    const sample = await inspectImport(org.site, imp);
    if (!sample.ok) throw new Error(sample.reason);
    await closeQueue();
    state.url = BROKEN;
    try {
      const r = await startImport({ orgId: org.org.id, userId: null }, org.site, imp, sample.inspection.mapping);
      expect(r).toEqual({ ok: false, errors: [QUEUE_DOWN] });
    } finally {
      state.url = null;
    }
    const [row] = await db.select().from(schema.imports).where(eq(schema.imports.id, imp.id));
    expect(row).toMatchObject({ status: "failed", error: QUEUE_DOWN, jobId: null });
    expect(row!.finishedAt).not.toBeNull();
  });

  it("attack: an analysis run whose job cannot be queued is marked failed at once, not left queued for ever", async () => {
    const { org } = await uploadedImport("QueueDownRun");
    await closeQueue();
    state.url = BROKEN;
    try {
      await expect(queueAnalysis({ siteId: org.site.id, trigger: "manual" })).rejects.toThrow();
    } finally {
      state.url = null;
    }
    const runs = await db.select().from(schema.analysisRuns).where(eq(schema.analysisRuns.siteId, org.site.id));
    expect(runs).toHaveLength(1);
    expect(runs[0]).toMatchObject({ status: "failed", error: ANALYSIS_NOT_QUEUED });
  });
});
