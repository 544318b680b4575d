import { createReadStream, readdirSync, statSync } from "node:fs";
import { join } from "node:path";
import { eq } from "drizzle-orm";
import { db } from "../app/db/client.server";
import { imports, sites } from "../app/db/schema";
import { newObjectKey, putObject } from "../app/services/storage.server";
import { inspectImport, saveTemplate } from "../app/models/imports.server";
import { runImport } from "../app/jobs/import-readings.server";

/**
 * Load the generated monthly exports through the product's import path: each file goes to object
 * storage as the record of what arrived, is inspected and mapped like an upload (the first month's
 * mapping is saved as a template, as an engineer would), and runs through the same import job,
 * here in-process so the seed finishes with the data in place.
 */
export async function loadDemoReadings(p: { orgId: string; siteId: string; engineerUserId: string; dir: string; log: (s: string) => void }) {
  const [site] = await db().select().from(sites).where(eq(sites.id, p.siteId)).limit(1);
  if (!site) throw new Error("demo readings: no such site");
  const files = readdirSync(p.dir).filter((f) => /^readings-\d{4}-\d{2}\.csv$/.test(f)).sort();
  let loaded = 0;
  for (const file of files) {
    const path = join(p.dir, file);
    const size = statSync(path).size;
    const objectKey = newObjectKey(`imports/${site.id}`, file);
    await putObject(objectKey, createReadStream(path), size);
    const [imp] = await db()
      .insert(imports)
      .values({ orgId: p.orgId, siteId: site.id, kind: "readings", status: "uploaded", fileName: file, objectKey, sizeBytes: size, createdBy: p.engineerUserId })
      .returning();
    const inspected = await inspectImport(site, imp!);
    if (!inspected.ok) throw new Error(`demo readings ${file}: ${inspected.reason}`);
    const mapping = inspected.inspection.mapping;
    if (file === files[0]) await saveTemplate(site.id, "Monthly SCADA export", mapping);
    await db()
      .update(imports)
      .set({ mapping, format: mapping.format, templateName: "Monthly SCADA export", status: "queued" })
      .where(eq(imports.id, imp!.id));
    const t0 = Date.now();
    const done = await runImport(imp!.id);
    if (done.status !== "done") throw new Error(`demo readings ${file}: ${done.error}`);
    loaded += done.readingsLoaded;
    p.log(`  ${file}: ${done.readingsLoaded.toLocaleString("en")} readings in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  }
  return { files: files.length, readings: loaded };
}
