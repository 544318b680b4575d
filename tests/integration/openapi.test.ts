/**
 * The OpenAPI document (/api/v1/openapi.json) against the routes and their real answers: every
 * route under api/v1 in app/routes.ts (path and method) is documented, and every documented
 * operation is called against the running server (right token, no token, missing records, bad
 * input), each JSON answer checked against the schema the document gives for its status.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { eq } from "drizzle-orm";
import { z } from "zod";
import routes from "../../app/routes";
import * as schema from "../../app/db/schema";
import { newToken, sha256 } from "../../app/services/password.server";
import { SAMPLE_SETTINGS, createOrg, db } from "../helpers/db";
import { http, type Res } from "../helpers/http";
import { loadFixture } from "./analysis-fixtures";

type Method = "get" | "post";
interface Doc {
  paths: Record<string, Partial<Record<Method, { security?: unknown[]; responses: Record<string, { content?: Record<string, { schema: unknown }> }> }>>>;
}

const LAYOUT = readFileSync(new URL("../../fixtures/small/layout.csv", import.meta.url), "utf8");
const NONE = "00000000-0000-4000-8000-000000000000";

/** The api/v1 routes of app/routes.ts as OpenAPI paths with the methods their modules export. */
function apiRoutes(): { path: string; method: Method }[] {
  const out: { path: string; method: Method }[] = [];
  const walk = (rs: { path?: string; file: string; children?: unknown[] }[]) => {
    for (const r of rs) {
      if (r.path && /^\/?api\/v1\//.test(r.path)) {
        const path = `/${r.path.replace(/^\//, "")}`.replace(/:(\w+)/g, "{$1}");
        const src = readFileSync(new URL(`../../app/${r.file}`, import.meta.url), "utf8");
        if (/export (async )?function loader\b/.test(src)) out.push({ path, method: "get" });
        if (/export (async )?function action\b/.test(src)) out.push({ path, method: "post" });
      }
      if (r.children) walk(r.children as never);
    }
  };
  walk(routes as never);
  return out;
}

let doc: Doc;
let org: Awaited<ReturnType<typeof createOrg>>;
let write = "";
let read = "";
const ids = { combiner: 0, flight: "", importId: "", run: "" };
/** Statuses seen per operation ("post /api/v1/sites"), each answer already checked. */
const seen = new Map<string, Set<number>>();

async function makeToken(orgId: string, scopes: string[]) {
  const t = newToken("ss_");
  await db.insert(schema.apiTokens).values({ orgId, name: "openapi test", tokenHash: sha256(t), prefix: t.slice(0, 7), scopes });
  return t;
}

/**
 * Calls `url` (which must match documented `path`) and checks the answer: its status is documented
 * for the operation and, when JSON, its body is valid by the documented schema for that status.
 */
async function check(method: Method, path: string, url: string, opts: { token?: string | null; body?: string; type?: string } = {}): Promise<Res> {
  const headers: Record<string, string> = {};
  if (opts.token) headers.authorization = `Bearer ${opts.token}`;
  if (opts.type) headers["content-type"] = opts.type;
  const r = await http(url, { method: method.toUpperCase(), headers, body: opts.body, origin: null });
  const op = doc.paths[path]?.[method];
  expect(op, `${method} ${path} is documented`).toBeDefined();
  const answer = op!.responses[String(r.status)];
  expect(answer, `${method} ${url} answered ${r.status}, which the document does not list: ${r.body.slice(0, 300)}`).toBeDefined();
  const type = r.headers.get("content-type") ?? "";
  if (/json/.test(type)) {
    const documented = answer!.content?.["application/json"]?.schema;
    expect(documented, `${method} ${path} ${r.status} has a JSON schema`).toBeDefined();
    const result = z.fromJSONSchema(documented as never).safeParse(r.json());
    expect(result.success ? [] : result.error.issues, `${method} ${url} ${r.status}: ${r.body.slice(0, 500)}`).toEqual([]);
  } else {
    expect(answer!.content?.["text/plain"], `${method} ${url} ${r.status} answered ${type}, which the document does not list`).toBeDefined();
  }
  const key = `${method} ${path}`;
  if (!seen.has(key)) seen.set(key, new Set());
  seen.get(key)!.add(r.status);
  return r;
}

beforeAll(async () => {
  org = await createOrg("OpenApi");
  const { devices } = await loadFixture(org.site.id, "small", { copies: 5 });
  ids.combiner = devices.get("B1-I1-C03")!;
  write = await makeToken(org.org.id, ["write"]);
  read = await makeToken(org.org.id, ["read"]);
  const [f] = await db.insert(schema.flights).values({ siteId: org.site.id, startedAt: new Date(), blockIds: [], pilotName: "OpenAPI pilot", aircraft: "test" }).returning();
  ids.flight = f!.id;
  const d = await http("/api/v1/openapi.json");
  expect(d.status).toBe(200);
  doc = d.json<Doc>();
});

describe("OpenAPI document", () => {
  it("documents every route under /api/v1 of app/routes.ts, with each method it answers, and nothing else", () => {
    const wanted = apiRoutes();
    expect(wanted.length).toBeGreaterThanOrEqual(12);
    const missing = wanted.filter((r) => !doc.paths[r.path]?.[r.method]).map((r) => `${r.method} ${r.path}`);
    expect(missing).toEqual([]);
    const documented = Object.entries(doc.paths).flatMap(([path, ops]) => Object.keys(ops).map((m) => `${m} ${path}`));
    expect(documented.filter((d) => !wanted.some((r) => `${r.method} ${r.path}` === d))).toEqual([]);
  });

  it("README's API table lists every documented operation", () => {
    const readme = readFileSync(new URL("../../README.md", import.meta.url), "utf8");
    const rows = [...readme.matchAll(/^\| `(GET|POST) (\/api\/v1\/[^`]*)` \|/gm)].map((m) => `${m[1]!.toLowerCase()} ${m[2]!.replace(/:(\w+)/g, "{$1}")}`);
    const documented = Object.entries(doc.paths).flatMap(([path, ops]) => Object.keys(ops).map((m) => `${m} ${path}`));
    expect(documented.filter((d) => !rows.includes(d))).toEqual([]);
    expect(rows.filter((r) => !documented.includes(r))).toEqual([]);
  });

  it("every answer of every documented operation, right or wrong, has the body the document gives for its status", async () => {
    const s = org.site.id;
    const site = (p = "") => `/api/v1/sites/{siteId}${p}`;
    const json = "application/json";
    const csv = "text/csv";

    await check("get", "/api/v1/openapi.json", "/api/v1/openapi.json", { token: null });
    await check("get", "/api/v1/me", "/api/v1/me", { token: read });
    await check("get", "/api/v1/me", "/api/v1/me", { token: null });
    await check("get", "/api/v1/me", "/api/v1/me", { token: "ss_not-a-token" });

    const created = await check("post", "/api/v1/sites", "/api/v1/sites", { token: write, body: JSON.stringify(SAMPLE_SETTINGS), type: json });
    expect(created.status).toBe(201);
    const bare = created.json<{ id: string }>().id;
    await check("post", "/api/v1/sites", "/api/v1/sites", { token: write, body: "{not json", type: json });
    const invalid = await check("post", "/api/v1/sites", "/api/v1/sites", { token: write, body: JSON.stringify({ ...SAMPLE_SETTINGS, latitude: 123 }), type: json });
    expect(invalid.json<{ issues: unknown[] }>().issues.length).toBeGreaterThan(0);
    await check("post", "/api/v1/sites", "/api/v1/sites", { token: read, body: JSON.stringify(SAMPLE_SETTINGS), type: json });

    // The layout: re-imported in place (200), refused lines (400, each with its line and reason).
    expect((await check("post", site("/layout"), `/api/v1/sites/${s}/layout`, { token: write, body: LAYOUT, type: csv })).status).toBe(200);
    const bad = await check("post", site("/layout"), `/api/v1/sites/${s}/layout`, { token: write, body: "block,inverter,combiner,string,modules\nB1,B1-I1,B1-I1-C01,x,nope\n", type: csv });
    expect(bad.status).toBe(400);
    expect(bad.json<{ errors: { reason: string }[] }>().errors[0]!.reason).toBeTruthy();
    await check("post", site("/layout"), `/api/v1/sites/${NONE}/layout`, { token: write, body: LAYOUT, type: csv });
    await check("post", site("/layout"), `/api/v1/sites/${s}/layout`, { token: read, body: LAYOUT, type: csv });

    // The analysis: none yet (run null), then a run over the fixture, followed until it ends.
    await check("get", site("/analysis"), `/api/v1/sites/${s}/analysis`, { token: read });
    await check("post", site("/analysis"), `/api/v1/sites/${s}/analysis`, { token: write, body: JSON.stringify({ fromDay: "yesterday" }), type: json });
    await check("post", site("/analysis"), `/api/v1/sites/${s}/analysis`, { token: read, body: "{}", type: json });
    await check("post", site("/analysis"), `/api/v1/sites/${NONE}/analysis`, { token: write, body: "{}", type: json });
    const start = await check("post", site("/analysis"), `/api/v1/sites/${s}/analysis`, { token: write, body: "{}", type: json });
    expect(start.status).toBe(202);
    ids.run = start.json<{ runId: string }>().runId;
    let status = "";
    for (let i = 0; i < 240 && status !== "done" && status !== "failed"; i++) {
      await new Promise((r) => setTimeout(r, 500));
      status = (await check("get", site("/analysis/{runId}"), `/api/v1/sites/${s}/analysis/${ids.run}`, { token: read })).json<{ status: string }>().status;
    }
    expect(status).toBe("done");
    const latest = await check("get", site("/analysis"), `/api/v1/sites/${s}/analysis`, { token: read });
    expect(latest.json<{ run: { id: string } }>().run.id).toBe(ids.run);
    await check("get", site("/analysis/{runId}"), `/api/v1/sites/${s}/analysis/${NONE}`, { token: read });
    await check("get", site("/analysis"), `/api/v1/sites/${s}/analysis`, { token: null });

    // What the run found: flags, the faulted combiner's series, the fly list.
    const flags = await check("get", site("/flags"), `/api/v1/sites/${s}/flags?state=all`, { token: read });
    expect(flags.json<{ flags: { combiner: string }[] }>().flags.map((f) => f.combiner)).toContain("B1-I1-C03");
    await check("get", site("/flags"), `/api/v1/sites/${NONE}/flags`, { token: read });
    const series = await check("get", site("/combiners/{combinerId}/series"), `/api/v1/sites/${s}/combiners/${ids.combiner}/series?days=60`, { token: read });
    expect(series.json<{ t: number[] }>().t.length).toBeGreaterThan(0);
    await check("get", site("/combiners/{combinerId}/series"), `/api/v1/sites/${s}/combiners/${2 ** 31 - 1}/series`, { token: read });
    const fly = await check("get", site("/fly-list"), `/api/v1/sites/${s}/fly-list`, { token: read });
    expect(fly.json<{ blocks: unknown[] }>().blocks.length).toBeGreaterThan(0);
    await check("get", site("/fly-list"), `/api/v1/sites/${NONE}/fly-list`, { token: read });
    await check("get", site("/fly-list"), `/api/v1/sites/${s}/fly-list`, { token: null });

    // A production export, stored and queued, then followed.
    const reading = "timestamp,device,metric,value\n2026-10-15T10:00:00Z,B1-I1-C01,dc_current,100\n";
    const imp = await check("post", site("/readings"), `/api/v1/sites/${s}/readings?format=long`, { token: write, body: reading, type: csv });
    expect(imp.status).toBe(202);
    ids.importId = imp.json<{ importId: string }>().importId;
    await check("post", site("/readings"), `/api/v1/sites/${s}/readings?format=tall`, { token: write, body: reading, type: csv });
    await check("post", site("/readings"), `/api/v1/sites/${s}/readings`, { token: write, body: "{}", type: json });
    await check("post", site("/readings"), `/api/v1/sites/${NONE}/readings`, { token: write, body: reading, type: csv });
    // Followed until it ends, so no import is still loading when the next test file starts.
    let impStatus = "";
    for (let i = 0; i < 240 && impStatus !== "done" && impStatus !== "failed"; i++) {
      if (i) await new Promise((r) => setTimeout(r, 250));
      impStatus = (await check("get", "/api/v1/imports/{id}", `/api/v1/imports/${ids.importId}`, { token: read })).json<{ status: string }>().status;
    }
    expect(impStatus).toBe("done");
    await check("get", "/api/v1/imports/{id}", `/api/v1/imports/${NONE}`, { token: read });
    await check("get", "/api/v1/imports/{id}", `/api/v1/imports/${ids.importId}`, { token: null });


    // Drone findings: imported and cross-referenced; refused lines; no flight.
    const finding = "string,class,delta_t_k\nB1-I1-C01/7,hot connector or junction box,29.6\n";
    const found = await check("post", site("/findings"), `/api/v1/sites/${s}/findings?flightId=${ids.flight}`, { token: write, body: finding, type: csv });
    expect(found.status).toBe(200);
    const refused = await check("post", site("/findings"), `/api/v1/sites/${s}/findings?flightId=${ids.flight}`, { token: write, body: "string,class,delta_t_k\nB9-I9-C99/1,hot connector or junction box,29.6\n", type: csv });
    expect(refused.status).toBe(400);
    await check("post", site("/findings"), `/api/v1/sites/${s}/findings`, { token: write, body: finding, type: csv });
    await check("post", site("/findings"), `/api/v1/sites/${s}/findings?flightId=${NONE}`, { token: write, body: finding, type: csv });
    await check("post", site("/findings"), `/api/v1/sites/${s}/findings?flightId=${ids.flight}`, { token: read, body: finding, type: csv });

    // On a site without readings, a layout that would delete a string with a drone finding is refused (409) until confirmed.
    expect((await check("post", site("/layout"), `/api/v1/sites/${bare}/layout`, { token: write, body: LAYOUT, type: csv })).status).toBe(200);
    const [f2] = await db.insert(schema.flights).values({ siteId: bare, startedAt: new Date(), blockIds: [], pilotName: "OpenAPI pilot", aircraft: "test" }).returning();
    expect((await check("post", site("/findings"), `/api/v1/sites/${bare}/findings?flightId=${f2!.id}`, { token: write, body: finding, type: csv })).status).toBe(200);
    const without = LAYOUT.split("\n").filter((l) => !l.startsWith("B1,B1-I1,B1-I1-C01,7,")).join("\n");
    expect((await check("post", site("/layout"), `/api/v1/sites/${bare}/layout`, { token: write, body: without, type: csv })).status).toBe(409);
    expect(await db.select().from(schema.findings).where(eq(schema.findings.flightId, f2!.id))).toHaveLength(1);

    // Every documented operation was called and answered at least once with success.
    for (const [path, ops] of Object.entries(doc.paths))
      for (const method of Object.keys(ops)) expect([...(seen.get(`${method} ${path}`) ?? [])].some((st) => st < 300), `${method} ${path}`).toBe(true);
  });
});
