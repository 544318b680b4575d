/**
 * Production-export imports on the real PostgreSQL and object store: the job function called
 * directly (as the worker calls it) and the HTTP API through the running app and worker.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { sql } from "drizzle-orm";
import { createOrg, db } from "../helpers/db";
import { http } from "../helpers/http";
import * as schema from "../../app/db/schema";
import { createToken } from "../../app/models/tokens.server";
import { getObjectStream } from "../../app/services/storage.server";
import { fingerprint, importBytes, siteWithLayout } from "../helpers/imports";
import type { TokenScope } from "../../app/permissions";

const bad = (name: string) => readFileSync(new URL(`../../fixtures/import-bad/${name}`, import.meta.url));

async function siteReadings(siteId: string, from?: string, to?: string) {
  const r = await db.execute<{ device: string; metric: number; ts: string; value: number }>(sql`
    select d.name as device, r.metric::int as metric, to_char(r.ts at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI"Z"') as ts, r.value
    from readings r join devices d on d.id = r.device_id
    where d.site_id = ${siteId} and (${from ?? null}::timestamptz is null or r.ts >= ${from ?? null}::timestamptz) and (${to ?? null}::timestamptz is null or r.ts < ${to ?? null}::timestamptz)
    order by d.name, r.metric, r.ts`);
  return r.rows;
}

async function tokenFor(org: Awaited<ReturnType<typeof createOrg>>, scopes: TokenScope[]) {
  return createToken({ orgId: org.org.id, userId: org.people.admin.id, sessionId: "", email: "", name: "", roles: ["admin"] }, "import test", scopes);
}

// Metric codes: position in METRICS from 1 (app/db/unmanaged/readings.ts).
const DC_CURRENT = 1;
const AC_POWER = 4;
const POA = 5;
const MODULE_T = 7;

describe("importing production exports", () => {
  it("loads a small long export with the right counts and values", async () => {
    const org = await siteWithLayout("Long");
    const text = [
      "timestamp,device,metric,value",
      "2026-06-01T12:00:00+02:00,B1-I1-C01,dc_current,8.25",
      "2026-06-01T12:00:00+02:00,B1-I1-C02,dc_current,8.5",
      "2026-06-01T12:00:00+02:00,MET1,poa_irradiance,912",
      "2026-06-01T12:05:00+02:00,B1-I1-C01,dc_current,8.75",
      "2026-06-01T12:05:00+02:00,B1-I1-C02,dc_current,8.25",
      "2026-06-01T12:05:00+02:00,MET1,poa_irradiance,915",
      "2026-06-01T12:10:00+02:00,B1-I1-C01,dc_current,9",
      "2026-06-01T12:10:00+02:00,B1-I1-C02,dc_current,8",
      "2026-06-01T12:10:00+02:00,MET1,poa_irradiance,920",
      "",
    ].join("\n");
    const imp = await importBytes(org, text);
    expect(imp.error).toBeNull();
    expect(imp).toMatchObject({ status: "done", format: "long", intervalSeconds: 300, rowsAccepted: 9, rowsRejected: 0, readingsLoaded: 9 });
    expect(imp.summary).toMatchObject({ devices: 3, from: "2026-06-01T10:00:00.000Z", to: "2026-06-01T10:10:00.000Z", gaps: { series: 3, seriesWithGaps: 0, missingIntervals: 0 } });
    const rows = await siteReadings(org.site.id);
    expect(rows).toHaveLength(9);
    expect(rows[0]).toEqual({ device: "B1-I1-C01", metric: DC_CURRENT, ts: "2026-06-01T10:00Z", value: 8.25 });
    expect(rows.find((r) => r.device === "MET1" && r.ts === "2026-06-01T10:10Z")).toEqual({ device: "MET1", metric: POA, ts: "2026-06-01T10:10Z", value: 920 });
  });

  it("loads a small wide export converting units to canonical (kW → W, °F → °C)", async () => {
    const org = await siteWithLayout("Wide");
    const text = [
      "Timestamp,B1-I1-C01 DC Current [A],B1-I1 AC Power [kW],MET1 Module Temp [degF]",
      "2026-06-02 12:00,8.25,41.5,113",
      "2026-06-02 12:15,8.5,42,122",
      "2026-06-02 12:30,8.75,,116.6",
      "2026-06-02 13:00,8.5,40,113",
    ].join("\n");
    const imp = await importBytes(org, text);
    expect(imp.error).toBeNull();
    expect(imp).toMatchObject({ status: "done", format: "wide", intervalSeconds: 900, rowsAccepted: 4, rowsRejected: 0, readingsLoaded: 11 });
    // One empty cell is no data (AC power at 12:30); 13:00 follows 12:30, so each series misses 12:45.
    expect(imp.summary).toMatchObject({ missingValues: 1, gaps: { series: 3, seriesWithGaps: 3, missingIntervals: 4 } });
    const rows = await siteReadings(org.site.id);
    expect(rows).toHaveLength(11);
    // Local Europe/Madrid summer time is UTC+2.
    expect(rows.filter((r) => r.metric === AC_POWER).map((r) => [r.ts, r.value])).toEqual([
      ["2026-06-02T10:00Z", 41500],
      ["2026-06-02T10:15Z", 42000],
      ["2026-06-02T11:00Z", 40000],
    ]);
    // (°F − 32) / 1.8: 113 °F = 45 °C, 122 °F = 50 °C, 116.6 °F = 47 °C (definition of the Fahrenheit scale).
    expect(rows.filter((r) => r.metric === MODULE_T).map((r) => r.value)).toEqual([45, 50, 47, 45]);
  });

  it("re-importing an overlapping export updates the overlap and never doubles", async () => {
    const org = await siteWithLayout("Overlap");
    const first = ["timestamp,device,metric,value", ...["12:00", "12:05", "12:10"].map((t, i) => `2026-06-03T${t}:00+02:00,B1-I1-C01,dc_current,${i + 1}`)].join("\n");
    const second = ["timestamp,device,metric,value", ...["12:05", "12:10", "12:15"].map((t, i) => `2026-06-03T${t}:00+02:00,B1-I1-C01,dc_current,${(i + 2) * 10}`)].join("\n");
    expect((await importBytes(org, first)).status).toBe("done");
    const total = (await fingerprint()).n;
    const again = await importBytes(org, second);
    expect(again).toMatchObject({ status: "done", readingsLoaded: 3 });
    expect((await fingerprint()).n).toBe(total + 1);
    expect((await siteReadings(org.site.id)).map((r) => [r.ts, r.value])).toEqual([
      ["2026-06-03T10:00Z", 1],
      ["2026-06-03T10:05Z", 20],
      ["2026-06-03T10:10Z", 30],
      ["2026-06-03T10:15Z", 40],
    ]);
    // The same file twice: nothing changes at all.
    const before = await fingerprint();
    expect((await importBytes(org, second)).status).toBe("done");
    expect(await fingerprint()).toEqual(before);
  });
});

describe("bad input: a clear error, and nothing lost", () => {
  let org: Awaited<ReturnType<typeof createOrg>>;
  beforeAll(async () => {
    org = await siteWithLayout("Bad");
  });

  /** A refused file: the error, and the readings table exactly as before. */
  async function refused(bytes: Buffer | string, opts: { format?: "long" | "wide" } = {}) {
    const before = await fingerprint();
    const imp = await importBytes(org, bytes, opts);
    expect(imp.status).toBe("failed");
    expect(imp.readingsLoaded).toBe(0);
    expect(await fingerprint()).toEqual(before);
    return imp;
  }

  /** A file that loads: how many readings it added. */
  async function loads(bytes: Buffer | string) {
    const before = await fingerprint();
    const imp = await importBytes(org, bytes);
    expect(imp.error).toBeNull();
    expect(imp.status).toBe("done");
    const after = await fingerprint();
    return { imp, added: after.n - before.n };
  }

  it("semicolon delimiter: detected, loads", async () => {
    const { imp, added } = await loads(bad("semicolon.csv"));
    expect(added).toBe(3);
    expect(imp.summary).toMatchObject({ delimiter: ";", format: "long" });
    expect((await siteReadings(org.site.id, "2026-07-01", "2026-07-02")).map((r) => r.value)).toEqual([8.25, 8.5, 8.75]);
  });

  it("tab delimiter: detected, loads", async () => {
    const { imp, added } = await loads(bad("tab.csv"));
    expect(added).toBe(6);
    expect(imp.summary).toMatchObject({ delimiter: "\t", format: "wide" });
    expect((await siteReadings(org.site.id, "2026-07-02", "2026-07-03")).map((r) => r.value)).toEqual([7.5, 7.75, 8, 7.25, 7.5, 7.75]);
  });

  it("BOM and CRLF: loads, the BOM does not stick to the first header", async () => {
    const { imp, added } = await loads(bad("bom-crlf.csv"));
    expect(added).toBe(3);
    expect(imp.summary).toMatchObject({ format: "long", blankLines: 0 });
    expect((await siteReadings(org.site.id, "2026-07-03", "2026-07-04")).map((r) => r.value)).toEqual([6.5, 6.75, 7]);
  });

  it("quoted fields holding commas: loads", async () => {
    const { added } = await loads(bad("quoted-commas.csv"));
    expect(added).toBe(6);
    const rows = await siteReadings(org.site.id, "2026-07-04", "2026-07-05");
    expect(rows.filter((r) => r.metric === AC_POWER).map((r) => r.value)).toEqual([1500, 1250, 1000]);
    expect(rows.filter((r) => r.metric === DC_CURRENT).map((r) => r.value)).toEqual([5.5, 5.75, 6]);
  });

  it("empty file: refused", async () => {
    const imp = await refused(bad("empty.csv"));
    expect(imp.error).toBe("The file is empty. Nothing was loaded.");
  });

  it("header only: refused", async () => {
    const imp = await refused(bad("header-only.csv"));
    expect(imp.error).toBe("Line 1: The file has a header but no data rows. Nothing was loaded.");
  });

  it("unknown device: that line is rejected, the others load", async () => {
    const { imp, added } = await loads(bad("unknown-device.csv"));
    expect(added).toBe(3);
    expect(imp).toMatchObject({ rowsAccepted: 3, rowsRejected: 1 });
    expect(imp.firstErrors).toEqual([{ line: 3, value: "B9-I9-C99", reason: 'unknown device "B9-I9-C99": not in the layout nor a weather station of the site' }]);
  });

  it("every line rejected: refused naming the first line", async () => {
    const imp = await refused(bad("all-rejected.csv"));
    expect(imp.error).toBe(
      'No reading could be loaded: every data line was rejected or empty. First problem: line 2: unknown device "B9-I9-C99": not in the layout nor a weather station of the site. Nothing was loaded.',
    );
    expect(imp.rowsRejected).toBe(0);
    expect(imp.firstErrors).toHaveLength(2);
  });

  it("non-numeric values: rejected into a report with formula cells neutralised", async () => {
    const { imp, added } = await loads(bad("non-numeric.csv"));
    expect(added).toBe(2);
    expect(imp.firstErrors).toEqual([
      { line: 3, value: "abc", reason: '"abc" is not a number' },
      { line: 4, value: "=1+2", reason: '"=1+2" is not a number' },
    ]);
    expect(imp.rejectReportKey).toMatch(/^imports\/[0-9a-f-]+\/reports\/[A-Za-z0-9_-]{22}\/rejects\.csv$/);
    const chunks: Buffer[] = [];
    for await (const c of await getObjectStream(imp.rejectReportKey!)) chunks.push(c as Buffer);
    expect(Buffer.concat(chunks).toString("utf8")).toBe(
      'line,column,value,reason\n3,,abc,"""abc"" is not a number"\n4,,\'=1+2,"""=1+2"" is not a number"\n',
    );
  });

  it("sentinel values −9999, −7999, NaN and empty are no data, not readings", async () => {
    const { imp, added } = await loads(bad("sentinels.csv"));
    expect(added).toBe(3);
    expect(imp).toMatchObject({ rowsRejected: 0 });
    expect(imp.summary).toMatchObject({ missingValues: 4, rejectedValues: 0 });
    expect((await siteReadings(org.site.id, "2026-07-07", "2026-07-08")).map((r) => r.value)).toEqual([3, 3.25, 3.5]);
  });

  it("duplicate timestamps in one file: the repeat is rejected naming the first line", async () => {
    const { imp, added } = await loads(bad("duplicate-timestamps.csv"));
    expect(added).toBe(3);
    expect(imp.firstErrors).toEqual([{ line: 3, value: "2.5", reason: "B1-I1-C01 dc_current at this timestamp was already given on line 2" }]);
    expect((await siteReadings(org.site.id, "2026-07-08", "2026-07-09")).map((r) => r.value)).toEqual([2, 2.25, 2.75]);
  });

  it("rows out of order: loads in time order", async () => {
    const { imp, added } = await loads(bad("out-of-order.csv"));
    expect(added).toBe(3);
    expect(imp.intervalSeconds).toBe(300);
    expect((await siteReadings(org.site.id, "2026-07-09", "2026-07-10")).map((r) => [r.ts, r.value])).toEqual([
      ["2026-07-09T10:00Z", 1],
      ["2026-07-09T10:05Z", 1.25],
      ["2026-07-09T10:10Z", 1.5],
    ]);
  });

  it("truncated last line: that line is rejected", async () => {
    const { imp, added } = await loads(bad("truncated-last-line.csv"));
    expect(added).toBe(3);
    expect(imp.firstErrors).toEqual([{ line: 5, reason: "expected 4 fields as in the header, found 3: the line looks truncated" }]);
  });

  it("a file that is not text: refused", async () => {
    const imp = await refused(bad("not-text.csv"));
    expect(imp.error).toBe("The file is not text: it contains a NUL byte at byte 17. Nothing was loaded.");
    const zip = await refused(Buffer.concat([Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00]), Buffer.alloc(200, 7)]));
    expect(zip.error).toBe("The file is a ZIP archive (an .xlsx workbook is one), not CSV text: export the sheet as CSV. Nothing was loaded.");
  });

  it("invalid UTF-8 after the first bytes: refused", async () => {
    const good = "timestamp,device,metric,value\n" + "2026-07-14T12:00:00+02:00,B1-I1-C01,dc_current,1\n".repeat(8000);
    const imp = await refused(Buffer.concat([Buffer.from(good), Buffer.from([0xff, 0xfe, 0x0a])]));
    expect(imp.error).toBe(`Line 8002 is not valid UTF-8 text (byte ${(good.length + 1).toLocaleString("en")} of the file): export it as UTF-8 CSV. Nothing was loaded.`);
  });

  it("one enormous line: refused naming the line", async () => {
    const text = "timestamp,device,metric,value\n2026-07-12T12:00:00+02:00,B1-I1-C01,dc_current,1\n2026-07-12T12:05:00+02:00,B1-I1-C01,dc_current," + "9".repeat(1_100_000) + "\n";
    const imp = await refused(text);
    expect(imp.error).toBe("Line 3 is longer than 1,000,000 characters; the file is refused. Nothing was loaded.");
  });

  it("no column maps to a device: refused", async () => {
    const imp = await refused(bad("no-mapping.csv"));
    expect(imp.error).toBe("The mapping cannot be used: No column is mapped to a device and metric. Nothing was loaded.");
  });

  it("a long file sent as format=wide: refused", async () => {
    const imp = await refused(bad("semicolon.csv"), { format: "wide" });
    expect(imp.error).toBe("The file has timestamp, device, metric and value columns (a long export), but format=wide was asked for. Nothing was loaded.");
  });
});

describe("readings API", () => {
  it("POST stores and queues; GET follows the import to done; other organisations get 404", async () => {
    const org = await siteWithLayout("Api");
    const other = await createOrg("ApiOther");
    const token = await tokenFor(org, ["write"]);
    const otherToken = await tokenFor(other, ["write", "read"]);
    const csv = ["timestamp,device,metric,value", ...[0, 5, 10, 15].map((m) => `2026-06-05T12:${String(m).padStart(2, "0")}:00+02:00,B1-I1-C02,dc_current,${7 + m / 10}`)].join("\n") + "\n";

    const post = await http(`/api/v1/sites/${org.site.id}/readings?format=long`, { headers: { authorization: `Bearer ${token}`, "content-type": "text/csv" }, body: csv });
    expect(post.status).toBe(202);
    const { importId, statusUrl } = post.json<{ importId: string; statusUrl: string }>();
    expect(statusUrl).toBe(`/api/v1/imports/${importId}`);

    let body: { status: string; rowsAccepted: number; rowsRejected: number; readingsLoaded: number; firstErrors: unknown[]; progress: number; intervalSeconds: number } | null = null;
    for (let i = 0; i < 100; i++) {
      const res = await http(statusUrl, { headers: { authorization: `Bearer ${token}` } });
      expect(res.status).toBe(200);
      body = res.json();
      if (body!.status === "done" || body!.status === "failed") break;
      await new Promise((r) => setTimeout(r, 200));
    }
    expect(body).toMatchObject({ status: "done", rowsAccepted: 4, rowsRejected: 0, readingsLoaded: 4, firstErrors: [], progress: 1, intervalSeconds: 300 });
    expect((await siteReadings(org.site.id)).map((r) => r.value)).toEqual([7, 7.5, 8, 8.5]);

    // Another organisation's token: the site and the import do not exist for it.
    const before = await fingerprint();
    const cross = await http(`/api/v1/sites/${org.site.id}/readings`, { headers: { authorization: `Bearer ${otherToken}`, "content-type": "text/csv" }, body: csv });
    expect(cross.status).toBe(404);
    expect((await http(statusUrl, { headers: { authorization: `Bearer ${otherToken}` } })).status).toBe(404);
    expect(await fingerprint()).toEqual(before);

    // A read-only token may follow but not send; no token at all is 401.
    const reader = await tokenFor(org, ["read"]);
    expect((await http(statusUrl, { headers: { authorization: `Bearer ${reader}` } })).status).toBe(200);
    expect((await http(`/api/v1/sites/${org.site.id}/readings`, { headers: { authorization: `Bearer ${reader}`, "content-type": "text/csv" }, body: csv })).status).toBe(403);
    expect((await http(`/api/v1/sites/${org.site.id}/readings`, { headers: { "content-type": "text/csv" }, body: csv })).status).toBe(401);
  });

  it("an unknown mapping template or a bad format is refused before anything is stored", async () => {
    const org = await siteWithLayout("ApiBad");
    const token = await tokenFor(org, ["write"]);
    const headers = { authorization: `Bearer ${token}`, "content-type": "text/csv" };
    const noTemplate = await http(`/api/v1/sites/${org.site.id}/readings?mapping=nope`, { headers, body: "a,b\n" });
    expect(noTemplate.status).toBe(400);
    expect(noTemplate.json()).toEqual({ error: 'No mapping template named "nope" for this site.' });
    expect((await http(`/api/v1/sites/${org.site.id}/readings?format=tall`, { headers, body: "a,b\n" })).status).toBe(400);
  });

  it("serves an OpenAPI 3.1 document of the API", async () => {
    const res = await http("/api/v1/openapi.json");
    expect(res.status).toBe(200);
    const doc = res.json<{ openapi: string; paths: Record<string, Record<string, unknown>> }>();
    expect(doc.openapi).toBe("3.1.0");
    expect(Object.keys(doc.paths).sort()).toEqual([
      "/api/v1/imports/{id}",
      "/api/v1/me",
      "/api/v1/openapi.json",
      "/api/v1/sites",
      "/api/v1/sites/{siteId}/analysis",
      "/api/v1/sites/{siteId}/analysis/{runId}",
      "/api/v1/sites/{siteId}/combiners/{combinerId}/series",
      "/api/v1/sites/{siteId}/findings",
      "/api/v1/sites/{siteId}/flags",
      "/api/v1/sites/{siteId}/fly-list",
      "/api/v1/sites/{siteId}/layout",
      "/api/v1/sites/{siteId}/readings",
    ]);
    expect(Object.keys(doc.paths["/api/v1/sites/{siteId}/readings"]!)).toEqual(["post"]);
  });
});
