/**
 * Request handling against hostile input: form field names that reach a prototype, where the
 * sign-in page sends people afterwards, cross-site posts with the session cookie, and the smaller
 * checks of ids, error texts and caching.
 */
import { randomBytes } from "node:crypto";
import { describe, expect, it } from "vitest";
import { and, eq, inArray } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { sha256 } from "../../app/services/password.server";
import { createOrg, db, pool, SAMPLE_SETTINGS } from "../helpers/db";
import { loadFixture } from "./analysis-fixtures";
import { BASE, http, signIn } from "../helpers/http";

function flat(o: Record<string, unknown>, prefix = ""): Record<string, string | string[]> {
  const out: Record<string, string | string[]> = {};
  for (const [k, v] of Object.entries(o)) {
    if (Array.isArray(v)) out[`${prefix}${k}[]`] = v.map(String);
    else if (v && typeof v === "object") Object.assign(out, flat(v as Record<string, unknown>, `${prefix}${k}.`));
    else if (v !== undefined) out[prefix + k] = String(v);
  }
  return out;
}

async function token(orgId: string, scopes: ("read" | "write" | "admin")[] = ["read", "write"]) {
  const t = `ss_${randomBytes(16).toString("hex")}`;
  await db.insert(schema.apiTokens).values({ orgId, name: "request-handling test", tokenHash: sha256(t), prefix: t.slice(0, 7), scopes });
  return t;
}

describe("dotted form field names", () => {
  it("attack: a settings field named __proto__.headers (or constructor/prototype) is refused and every other page still answers", async () => {
    const a = await createOrg("Proto");
    const b = await createOrg("Bystander");
    const { cookie } = await signIn(a.people.engineer.email, a.password);
    const { cookie: otherCookie } = await signIn(b.people.admin.email, b.password);
    const readToken = await token(b.org.id, ["read"]);
    const fields = ["__proto__.headers", "__proto__.status", "module.__proto__.pmp", "constructor.prototype.headers", "prototype.x", "__proto__[]", "metStations.constructor"];
    for (const field of fields) {
      for (const path of [`/sites/${a.site.id}/settings`, "/sites/new"]) {
        const r = await http(path, { cookie, form: { ...flat(SAMPLE_SETTINGS), [field]: "1" } });
        expect(r.status, `${field} to ${path}`).toBe(400);
        expect(r.body).toContain("which this page does not take");
      }
    }
    expect(({} as Record<string, unknown>).headers).toBeUndefined();
    // The process still answers everyone: the sign-in page, the API, another organisation's pages.
    expect((await http("/login")).status).toBe(200);
    expect((await http("/healthz")).status).toBe(200);
    expect((await http("/api/v1/me", { headers: { authorization: `Bearer ${readToken}` } })).status).toBe(200);
    expect((await http(`/sites/${b.site.id}/settings`, { cookie: otherCookie })).status).toBe(200);
    expect((await http(`/sites/${b.site.id}/flags`, { cookie: otherCookie })).status).toBe(200);
    // Ordinary dotted fields still work, and a refused value comes back to the form (400 with messages).
    const ok = await http(`/sites/${a.site.id}/settings`, { cookie, form: flat({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, pmp: 560 } }) });
    expect(ok.status).toBe(200);
    expect(ok.body).toContain("Settings saved");
    const bad = await http(`/sites/${a.site.id}/settings`, { cookie, form: flat({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, pmp: "abc" } }) });
    expect(bad.status).toBe(400);
    expect(bad.body).toContain("Pmp must be a number");
    const badData = await http(`/sites/${a.site.id}/settings.data`, { cookie, form: flat({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, pmp: "abc" } }) });
    expect(badData.status).toBe(400);
    expect(badData.body).toContain("Pmp must be a number");
  });
});

describe("where the sign-in page sends people", () => {
  // [next as given, where the browser must be sent]
  const CASES: [string, string][] = [
    ["/\\evil.example", "/"],
    ["//evil.example", "/"],
    ["///evil.example", "/"],
    ["/%5Cevil.example", "/%5Cevil.example"], // a path of ours (a browser does not decode it into a host)
    ["https://evil.example", "/"],
    ["http://evil.example/sites", "/"],
    ["\\/evil.example", "/"],
    ["\\\\evil.example", "/"],
    ["/\t/evil.example", "/"],
    ["/\n/evil.example", "/"],
    [" /\\evil.example", "/"],
    ["/.//evil.example", "/"],
    ["/..//evil.example", "/"],
    ["javascript:alert(document.domain)", "/"],
    ["data:text/html,<script>alert(1)</script>", "/"],
    [`${BASE}/portfolio?x=1#top`, "/portfolio?x=1#top"],
    ["/sites/abc/flags?state=open#list", "/sites/abc/flags?state=open#list"],
    ["", "/"],
  ];

  it("attack: a next address naming another site (/\\evil, //evil, https://evil, javascript:…) sends the signed-in person to the app's own home instead", async () => {
    const { people, password } = await createOrg("Next");
    for (const [next, expected] of CASES) {
      const r = await http("/login", { form: { email: people.engineer.email, password, next } });
      expect(r.status, JSON.stringify(next)).toBe(302);
      expect(r.location, JSON.stringify(next)).toBe(expected);
      // What a browser would make of the Location: always this app.
      expect(new URL(r.location!, BASE).origin, JSON.stringify(next)).toBe(new URL(BASE).origin);
    }
  });
});

const runsOf = async (siteId: string) => (await db.select({ id: schema.analysisRuns.id }).from(schema.analysisRuns).where(eq(schema.analysisRuns.siteId, siteId))).length;

describe("cross-site posts to the API", () => {
  it("attack: a post from another site to /api/v1/sites/:id/analysis with the session cookie is refused (403) and queues nothing", async () => {
    const { people, password, site, org } = await createOrg("Csrf");
    const { cookie } = await signIn(people.engineer.email, password);
    const json = { "content-type": "application/json" };
    const before = await runsOf(site.id);
    const path = `/api/v1/sites/${site.id}/analysis`;
    const foreign = await http(path, { method: "POST", cookie, headers: json, body: "{}", origin: "https://evil.example" });
    expect(foreign.status).toBe(403);
    expect(foreign.body).toContain("sent from another site");
    const fetchSite = await http(path, { method: "POST", cookie, headers: { ...json, "sec-fetch-site": "cross-site" }, body: "{}", origin: null });
    expect(fetchSite.status).toBe(403);
    const opaque = await http(path, { method: "POST", cookie, headers: json, body: "{}", origin: "null" });
    expect(opaque.status).toBe(403);
    // Some other Authorization header does not buy the exemption either.
    const basic = await http(path, { method: "POST", cookie, headers: { ...json, authorization: "Basic Zm9vOmJhcg==" }, body: "{}", origin: "https://evil.example" });
    expect(basic.status).toBe(403);
    const form = await http(path, { method: "POST", cookie, form: { fromDay: "2024-06-01" }, origin: "https://evil.example" });
    expect(form.status).toBe(403);
    expect(await runsOf(site.id)).toBe(before);
    // The app's own screens (same origin, cookie) and machine clients (Bearer, any Origin) still start runs.
    const own = await http(path, { method: "POST", cookie, headers: json, body: "{}" });
    expect(own.status).toBe(202);
    const t = await token(org.id);
    const machine = await http(path, { method: "POST", headers: { ...json, authorization: `Bearer ${t}` }, body: "{}", origin: "https://ci.example" });
    expect(machine.status).toBe(202);
  });
});

describe("one on-demand analysis at a time", () => {
  it("attack: many analysis requests for a site at once (API token and screens) are all answered with one queued run, round after round", async () => {
    const org = await createOrg("OneRun");
    await loadFixture(org.site.id, "small");
    const t = await token(org.org.id);
    const { cookie } = await signIn(org.people.engineer.email, org.password);
    const path = `/api/v1/sites/${org.site.id}/analysis`;
    const post = (i: number) =>
      i % 3 === 0
        ? http(path, { method: "POST", cookie, headers: { "content-type": "application/json" }, body: "{}" })
        : http(path, { method: "POST", headers: { authorization: `Bearer ${t}`, "content-type": "application/json" }, body: "{}", origin: null });
    const seen = new Set<string>();
    for (let round = 0; round < 4; round++) {
      // The worker takes the run and then waits for the site's run lock, held here: the run stays
      // running for the whole round, so every answer must name it.
      const hold = await pool.connect();
      let runId: string;
      try {
        await hold.query("select pg_advisory_lock(hashtext('analysis:' || $1))", [org.site.id]);
        const answers = await Promise.all(Array.from({ length: 12 }, (_, i) => post(i)));
        for (const a of answers) expect(a.status, a.body).toBe(202);
        const ids = new Set(answers.map((a) => a.json<{ runId: string }>().runId));
        expect(ids.size, `round ${round}`).toBe(1);
        runId = [...ids][0]!;
        expect(seen.has(runId)).toBe(false);
        seen.add(runId);
        expect(answers.filter((a) => !a.json<{ existing: boolean }>().existing)).toHaveLength(1);
        // Later ones too, and with another range: the same run.
        const later = await http(path, { method: "POST", headers: { authorization: `Bearer ${t}`, "content-type": "application/json" }, body: JSON.stringify({ fromDay: "2020-01-01", toDay: "2020-01-02" }), origin: null });
        expect(later.json<{ runId: string; existing: boolean }>()).toMatchObject({ runId, existing: true });
        const active = await db
          .select({ id: schema.analysisRuns.id })
          .from(schema.analysisRuns)
          .where(and(eq(schema.analysisRuns.siteId, org.site.id), inArray(schema.analysisRuns.status, ["queued", "running"])));
        expect(active.map((r) => r.id)).toEqual([runId]);
      } finally {
        await hold.query("select pg_advisory_unlock(hashtext('analysis:' || $1))", [org.site.id]).catch(() => undefined);
        hold.release();
      }
      let status = "";
      for (let i = 0; i < 240 && status !== "done" && status !== "failed"; i++) {
        await new Promise((r) => setTimeout(r, 250));
        status = (await http(`${path}/${runId}`, { headers: { authorization: `Bearer ${t}` } })).json<{ status: string }>().status;
      }
      expect(status).toBe("done");
    }
    // Once it is done, the next request queues a new run.
    const after = await post(1);
    expect(after.json<{ runId: string; existing: boolean }>().existing).toBe(false);
    expect(seen.has(after.json<{ runId: string }>().runId)).toBe(false);
  });
});
