/**
 * The readings upload limit (UPLOAD_MAX_BYTES, 4 KB in this file) applies to the stored object
 * itself: a second PUT to the same signed URL can replace a checked upload with a bigger one.
 * The import job counts the bytes it streams; a refused upload cannot be started, and its
 * object is removed.
 */
import { describe, expect, it, vi } from "vitest";
vi.hoisted(() => {
  process.env.UPLOAD_MAX_BYTES = "4096";
});
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { runImport } from "../../app/jobs/import-readings.server";
import { createUpload, FILE_GONE, inspectImport, markUploaded, siteDevices, startImport } from "../../app/models/imports.server";
import { newObjectKey, objectSize, putObject } from "../../app/services/storage.server";
import { db } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import { siteWithLayout, tableChecksums } from "../helpers/imports";

/** A valid long export of about `bytes` bytes (two combiners, 5-minute steps). */
function exportOf(bytes: number): Buffer {
  let out = "timestamp,device,metric,value\n";
  for (let i = 0; out.length < bytes; i++) {
    const ts = new Date(Date.UTC(2026, 1, 1) + Math.floor(i / 2) * 300_000).toISOString().replace(".000Z", "Z");
    out += `${ts},B1-I1-C0${(i % 2) + 1},dc_current,${(i % 90) / 10 + 1}\n`;
  }
  return Buffer.from(out);
}

describe("readings upload limit", () => {
  it("attack: an object swapped for a bigger one after its size was checked is refused while the job streams it; nothing is loaded", async () => {
    const org = await siteWithLayout("CapStream");
    const small = exportOf(1000);
    const [imp] = await db
      .insert(schema.imports)
      .values({ orgId: org.org.id, siteId: org.site.id, kind: "readings", status: "queued", fileName: "swap.csv", objectKey: newObjectKey(`imports/${org.site.id}`, "swap.csv"), sizeBytes: small.length })
      .returning();
    // Checked at 1 KB, then replaced by 40 KB of good rows before the worker reads it.
    await putObject(imp!.objectKey, exportOf(40_000), exportOf(40_000).length);
    // The weather station's device row is made by the first look at a file: make it now.
    await siteDevices(org.site);
    const before = await tableChecksums();
    const done = await runImport(imp!.id);
    expect(done.status).toBe("failed");
    expect(done.error).toBe("The file is larger than the limit of 4 KB. Nothing was loaded; upload a smaller file.");
    expect(done.readingsLoaded).toBe(0);
    expect(await tableChecksums()).toEqual(before);
  });

  it("attack: an upload refused for its size cannot be started (model and start action answer 400) and its object is removed", async () => {
    const org = await siteWithLayout("CapStart");
    const actor = { orgId: org.org.id, userId: org.people.engineer.id };
    const created = await createUpload(actor, org.site, { name: "big.csv", size: 1000 });
    if (!created.ok) throw new Error(created.error);
    // The browser claims 1 KB and PUTs 10 KB.
    const put = await fetch(created.url, { method: "PUT", body: new Uint8Array(exportOf(10_000)) });
    expect(put.status).toBe(200);
    expect(await markUploaded(actor, org.site, created.importId)).toEqual({ ok: false, error: "The file is over the size limit." });
    const [refused] = await db.select().from(schema.imports).where(eq(schema.imports.id, created.importId));
    expect(refused).toMatchObject({ status: "failed" });
    expect(refused!.error).toMatch(/^The file is 10 KB; the limit is 4 KB\. It was not imported and has been removed; upload a smaller file\.$/);
    expect(await objectSize(refused!.objectKey)).toBeNull();
    // Starting it anyway: refused with a plain reason, nothing queued.
    const sample = await inspectImport(org.site, refused!);
    expect(sample).toEqual({ ok: false, line: null, reason: FILE_GONE });
    const r = await startImport(actor, org.site, refused!, { format: "long", timestampColumn: 0, deviceColumn: 1, metricColumn: 2, valueColumn: 3 } as never);
    expect(r).toEqual({ ok: false, errors: [FILE_GONE] });
    // Through the screen's start action, as an engineer would.
    const { cookie } = await signIn(org.people.engineer.email, org.password);
    const res = await http(`/sites/${org.site.id}/data/${created.importId}`, { cookie, form: { intent: "start" } });
    expect(res.status).toBe(400);
    expect(res.body).toContain("The file is no longer stored (it was refused or removed); upload it again.");
    const [after] = await db.select().from(schema.imports).where(eq(schema.imports.id, created.importId));
    expect(after).toMatchObject({ status: "failed", jobId: null, readingsLoaded: 0 });
  });

  it("attack: an upload that passed the check and was then replaced by a bigger object cannot be started; the object is removed", async () => {
    const org = await siteWithLayout("CapSwapStart");
    const actor = { orgId: org.org.id, userId: org.people.engineer.id };
    const created = await createUpload(actor, org.site, { name: "ok.csv", size: 1000 });
    if (!created.ok) throw new Error(created.error);
    expect((await fetch(created.url, { method: "PUT", body: new Uint8Array(exportOf(1000)) })).status).toBe(200);
    expect(await markUploaded(actor, org.site, created.importId)).toEqual({ ok: true, importId: created.importId });
    const [imp] = await db.select().from(schema.imports).where(eq(schema.imports.id, created.importId));
    const sample = await inspectImport(org.site, imp!);
    if (!sample.ok) throw new Error(sample.reason);
    // The signed URL is still valid: a second PUT swaps in 10 KB.
    expect((await fetch(created.url, { method: "PUT", body: new Uint8Array(exportOf(10_000)) })).status).toBe(200);
    const r = await startImport(actor, org.site, imp!, sample.inspection.mapping);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors[0]).toMatch(/^The file is 10 KB; the limit is 4 KB\. It was not imported and has been removed/);
    const [after] = await db.select().from(schema.imports).where(eq(schema.imports.id, created.importId));
    expect(after).toMatchObject({ status: "failed", jobId: null });
    expect(await objectSize(imp!.objectKey)).toBeNull();
  });
});
