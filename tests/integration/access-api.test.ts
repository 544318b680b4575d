/**
 * Every API route (app/routes/api.*.ts, enumerated from app/routes.ts) against every kind of
 * token: none → 401, revoked → 401, another organisation's → 404 for ids in the URL (the same
 * status and body as a record that does not exist), a read-scope token on a write route → 403,
 * the right token → 2xx. An API route without a row here fails the first test.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { eq } from "drizzle-orm";
import routes from "../../app/routes";
import * as schema from "../../app/db/schema";
import { newToken, sha256 } from "../../app/services/password.server";
import { SAMPLE_SETTINGS, createOrg, db } from "../helpers/db";
import { http, type Res } from "../helpers/http";

/** The ids of one organisation's records that API paths name. */
interface Ids {
  site: string;
  combiner: number;
  flight: string;
  importId: string;
  run: string;
}
const NONE: Ids = { site: "00000000-0000-4000-8000-000000000000", combiner: 2 ** 31 - 1, flight: "00000000-0000-4000-8000-000000000001", importId: "00000000-0000-4000-8000-000000000002", run: "00000000-0000-4000-8000-000000000003" };

interface ApiRow {
  method: "GET" | "POST";
  /** The scope the route needs; `public` needs no token. */
  scope: "read" | "write" | "public";
  path: (ids: Ids) => string;
  /** Does the path name records of an organisation (so another organisation's token gets 404)? */
  names: boolean;
  body?: () => { body: string; type: string };
  ok: number;
}

const LAYOUT = readFileSync(new URL("../../fixtures/small/layout.csv", import.meta.url), "utf8");
const csv = (body: string) => () => ({ body, type: "text/csv" });
const json = (value: unknown) => () => ({ body: JSON.stringify(value), type: "application/json" });

const TABLE: Record<string, ApiRow[]> = {
  "routes/api.me.ts": [{ method: "GET", scope: "read", path: () => "/api/v1/me", names: false, ok: 200 }],
  "routes/api.openapi.ts": [{ method: "GET", scope: "public", path: () => "/api/v1/openapi.json", names: false, ok: 200 }],
  "routes/api.sites.ts": [{ method: "POST", scope: "write", path: () => "/api/v1/sites", names: false, body: json(SAMPLE_SETTINGS), ok: 201 }],
  "routes/api.flags.ts": [{ method: "GET", scope: "read", path: (i) => `/api/v1/sites/${i.site}/flags`, names: true, ok: 200 }],
  "routes/api.analysis.ts": [
    { method: "GET", scope: "read", path: (i) => `/api/v1/sites/${i.site}/analysis`, names: true, ok: 200 },
    { method: "POST", scope: "write", path: (i) => `/api/v1/sites/${i.site}/analysis`, names: true, body: json({}), ok: 202 },
  ],
  "routes/api.analysis-run.ts": [{ method: "GET", scope: "read", path: (i) => `/api/v1/sites/${i.site}/analysis/${i.run}`, names: true, ok: 200 }],
  "routes/api.combiner-series.ts": [{ method: "GET", scope: "read", path: (i) => `/api/v1/sites/${i.site}/combiners/${i.combiner}/series`, names: true, ok: 200 }],
  "routes/api.sites.layout.ts": [{ method: "POST", scope: "write", path: (i) => `/api/v1/sites/${i.site}/layout`, names: true, body: csv(LAYOUT), ok: 200 }],
  "routes/api.sites.readings.ts": [
    {
      method: "POST",
      scope: "write",
      path: (i) => `/api/v1/sites/${i.site}/readings?format=long`,
      names: true,
      body: csv("timestamp,device,metric,value\n2026-10-15T10:00:00Z,B1-I1-C01,dc_current,101.5\n"),
      ok: 202,
    },
  ],
  "routes/api.sites.findings.ts": [
    {
      method: "POST",
      scope: "write",
      path: (i) => `/api/v1/sites/${i.site}/findings?flightId=${i.flight}`,
      names: true,
      body: csv("string,class,delta_t_k\nB1-I1-C01/7,hot connector or junction box,29.6\n"),
      ok: 200,
    },
  ],
  "routes/api.sites.fly-list.ts": [{ method: "GET", scope: "read", path: (i) => `/api/v1/sites/${i.site}/fly-list`, names: true, ok: 200 }],
  "routes/api.imports.show.ts": [{ method: "GET", scope: "read", path: (i) => `/api/v1/imports/${i.importId}`, names: true, ok: 200 }],
};

function apiFiles(): string[] {
  const out: string[] = [];
  const walk = (rs: { file: string; children?: unknown[] }[]) => {
    for (const r of rs) {
      if (/^routes\/api\./.test(r.file)) out.push(r.file);
      if (r.children) walk(r.children as never);
    }
  };
  walk(routes as never);
  return out;
}

async function makeToken(orgId: string, scopes: string[], revoked = false) {
  const t = newToken("ss_");
  await db.insert(schema.apiTokens).values({ orgId, name: "access-api test", tokenHash: sha256(t), prefix: t.slice(0, 7), scopes, revokedAt: revoked ? new Date() : null });
  return t;
}

function call(row: ApiRow, path: string, token: string | null): Promise<Res> {
  const headers: Record<string, string> = {};
  if (token) headers.authorization = `Bearer ${token}`;
  const b = row.body?.();
  if (b) headers["content-type"] = b.type;
  return http(path, { method: row.method, headers, body: b?.body });
}

const mine = { ids: { ...NONE }, write: "", read: "", revoked: "" };
const theirs = { ids: { ...NONE }, write: "" };

/** Sets up an organisation's records through the API itself: layout, an import, a run; and a flight. */
async function populate(siteId: string, write: string): Promise<Ids> {
  const auth = { authorization: `Bearer ${write}` };
  const layout = await http(`/api/v1/sites/${siteId}/layout`, { method: "POST", headers: { ...auth, "content-type": "text/csv" }, body: LAYOUT });
  expect(layout.status, layout.body).toBe(200);
  const [c] = await db.select().from(schema.devices).where(eq(schema.devices.siteId, siteId)).then((ds) => ds.filter((d) => d.kind === "combiner"));
  const imp = await http(`/api/v1/sites/${siteId}/readings?format=long`, {
    method: "POST",
    headers: { ...auth, "content-type": "text/csv" },
    body: "timestamp,device,metric,value\n2026-10-15T10:00:00Z,B1-I1-C01,dc_current,100\n",
  });
  expect(imp.status, imp.body).toBe(202);
  const run = await http(`/api/v1/sites/${siteId}/analysis`, { method: "POST", headers: { ...auth, "content-type": "application/json" }, body: "{}" });
  expect(run.status, run.body).toBe(202);
  const [f] = await db.insert(schema.flights).values({ siteId, startedAt: new Date(), blockIds: [], pilotName: "API access pilot", aircraft: "test" }).returning();
  return { site: siteId, combiner: c!.id, flight: f!.id, importId: imp.json<{ importId: string }>().importId, run: run.json<{ runId: string }>().runId };
}

beforeAll(async () => {
  const a = await createOrg("ApiAccess");
  const b = await createOrg("ApiAccessOther");
  mine.write = await makeToken(a.org.id, ["write"]);
  mine.read = await makeToken(a.org.id, ["read"]);
  mine.revoked = await makeToken(a.org.id, ["admin"], true);
  theirs.write = await makeToken(b.org.id, ["admin"]);
  mine.ids = await populate(a.site.id, mine.write);
  theirs.ids = await populate(b.site.id, theirs.write);
});

describe("API access table", () => {
  it("has rows for every API route module (and only for them), a GET row per loader and a POST row per action", () => {
    const files = apiFiles();
    expect(files.length).toBeGreaterThan(0);
    expect(files.filter((f) => !(f in TABLE))).toEqual([]);
    expect(Object.keys(TABLE).filter((f) => !files.includes(f))).toEqual([]);
    for (const f of files) {
      const src = readFileSync(new URL(`../../app/${f}`, import.meta.url), "utf8");
      const methods = TABLE[f]!.map((r) => r.method).sort();
      const want = [/export (async )?function loader\b/.test(src) ? "GET" : null, /export (async )?function action\b/.test(src) ? "POST" : null].filter(Boolean);
      expect(methods, f).toEqual(want);
    }
  });

  for (const [file, rows] of Object.entries(TABLE)) {
    for (const row of rows) {
      describe(`${row.method} ${file}`, () => {
        if (row.scope === "public") {
          it(`no token → ${row.ok}`, async () => {
            expect((await call(row, row.path(mine.ids), null)).status).toBe(row.ok);
          });
          return;
        }
        it("no token → 401", async () => {
          const r = await call(row, row.path(mine.ids), null);
          expect(r.status, r.body).toBe(401);
          expect(r.headers.get("content-type")).toMatch(/json/);
        });
        it("revoked token → 401", async () => {
          const r = await call(row, row.path(mine.ids), mine.revoked);
          expect(r.status, r.body).toBe(401);
        });
        if (row.scope === "write") {
          it("read-scope token → 403", async () => {
            const r = await call(row, row.path(mine.ids), mine.read);
            expect(r.status, r.body).toBe(403);
          });
        }
        if (row.names) {
          it("another organisation's token → 404, the same answer as a record that does not exist", async () => {
            const foreign = await call(row, row.path(mine.ids), theirs.write);
            const missing = await call(row, row.path(NONE), mine.write);
            expect(foreign.status, foreign.body).toBe(404);
            expect({ status: missing.status, body: missing.body }).toEqual({ status: foreign.status, body: foreign.body });
          });
          // Each id of the path, in turn, swapped for the other organisation's record of that kind.
          for (const key of ["site", "combiner", "flight", "importId", "run"] as const) {
            if (row.path(mine.ids) === row.path({ ...mine.ids, [key]: NONE[key] })) continue;
            it(`the other organisation's ${key} id in this organisation's URL → the same 404 as a missing ${key}`, async () => {
              const guessed = await call(row, row.path({ ...mine.ids, [key]: theirs.ids[key] }), mine.write);
              const missing = await call(row, row.path({ ...mine.ids, [key]: NONE[key] }), mine.write);
              expect(guessed.status, guessed.body).toBe(404);
              expect({ status: missing.status, body: missing.body }).toEqual({ status: guessed.status, body: guessed.body });
            });
          }
        }
        it(`the right token → ${row.ok}`, async () => {
          const token = row.scope === "read" ? mine.read : mine.write;
          const r = await call(row, row.path(mine.ids), token);
          expect(r.status, r.body).toBe(row.ok);
        });
      });
    }
  }
});
