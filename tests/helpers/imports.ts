/** Shared by the import tests: a site with a small layout, an upload run as the worker runs it, table checksums. */
import { expect } from "vitest";
import { sql } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { importLayout } from "../../app/models/layout.server";
import { runImport } from "../../app/jobs/import-readings.server";
import { newObjectKey, putObject } from "../../app/services/storage.server";
import { createOrg, db } from "./db";

export const LAYOUT = `block,inverter,combiner,string,modules
B1,B1-I1,B1-I1-C01,1,28
B1,B1-I1,B1-I1-C01,2,28
B1,B1-I1,B1-I1-C02,1,28
B1,B1-I1,B1-I1-C02,2,28
`;

export type Org = Awaited<ReturnType<typeof createOrg>>;

export async function siteWithLayout(label: string): Promise<Org> {
  const org = await createOrg(label);
  const r = await importLayout({ orgId: org.org.id, userId: null }, org.site.id, LAYOUT, { dryRun: false });
  expect(r.ok).toBe(true);
  return org;
}

/** Stores the bytes as an upload and runs the job in this process, as the worker would. */
export async function importBytes(org: Org, bytes: Buffer | string, opts: { format?: "long" | "wide"; fileName?: string } = {}) {
  const body = typeof bytes === "string" ? Buffer.from(bytes) : bytes;
  const fileName = opts.fileName ?? "test.csv";
  const objectKey = newObjectKey(`imports/${org.site.id}`, fileName);
  await putObject(objectKey, body, body.length);
  const [row] = await db
    .insert(schema.imports)
    .values({ orgId: org.org.id, siteId: org.site.id, kind: "readings", status: "queued", fileName, objectKey, sizeBytes: body.length, format: opts.format ?? null })
    .returning();
  return runImport(row!.id);
}

/** Row count and checksum of the whole readings table. */
export async function fingerprint() {
  const r = await db.execute<{ n: number; s: string }>(
    sql`select count(*)::int as n, coalesce(sum(hashtext(device_id||','||metric||','||ts||','||value)::bigint),0)::text as s from readings`,
  );
  return r.rows[0]!;
}

/**
 * md5 of every row of the tables an import can touch, in key order: equal before and after means
 * the tables are byte-for-byte the same.
 */
export async function tableChecksums(): Promise<Record<string, string>> {
  const r = await db.execute<Record<string, string>>(sql`select
    (select count(*) || ':' || coalesce(md5(string_agg(r::text, '|' order by device_id, metric, ts)), '') from readings r) as readings,
    (select count(*) || ':' || coalesce(md5(string_agg(d::text, '|' order by id)), '') from devices d) as devices,
    (select count(*) || ':' || coalesce(md5(string_agg(b::text, '|' order by id)), '') from blocks b) as blocks,
    (select count(*) || ':' || coalesce(md5(string_agg(s::text, '|' order by id)), '') from strings s) as strings,
    (select count(*) || ':' || coalesce(md5(string_agg(f::text, '|' order by id)), '') from findings f) as findings,
    (select count(*) || ':' || coalesce(md5(string_agg(i::text, '|' order by id)), '') from finding_images i) as finding_images`);
  return r.rows[0]!;
}
