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
import { plantWithFlag, findingOf } from "./flights-fixture";
import { BASE, http, signIn, flatForm, visible } from "../helpers/http";

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
        const r = await http(path, { cookie, form: { ...flatForm(SAMPLE_SETTINGS), [field]: "1" } });
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
    const ok = await http(`/sites/${a.site.id}/settings`, { cookie, form: flatForm({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, pmp: 560 } }) });
    expect(ok.status).toBe(200);
    expect(ok.body).toContain("Settings saved");
    const bad = await http(`/sites/${a.site.id}/settings`, { cookie, form: flatForm({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, pmp: "abc" } }) });
    expect(bad.status).toBe(400);
    expect(bad.body).toContain("Pmp must be a number");
    const badData = await http(`/sites/${a.site.id}/settings.data`, { cookie, form: flatForm({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, pmp: "abc" } }) });
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


describe("ids from forms", () => {
  it("attack: an inspection assigned to a made-up id or to another organisation's technician is refused (400) and nothing is planned", async () => {
    const a = await createOrg("InspA");
    const b = await createOrg("InspB");
    const { cookie } = await signIn(a.people.lead.email, a.password);
    expect((await http(`/sites/${a.site.id}/inspections`, { cookie })).status).toBe(200);
    const planned = async () => (await db.select().from(schema.inspections).where(eq(schema.inspections.siteId, a.site.id))).length;
    for (const assigneeId of ["not-a-person", "'; drop table users; --", b.people.technician.id, a.people.owner.id]) {
      const r = await http(`/sites/${a.site.id}/inspections`, { cookie, form: { intent: "routine", assigneeId } });
      expect(r.status, assigneeId).toBe(400);
      expect(visible(r.body)).toContain("Choose a technician or O&M lead of your organisation from the list.");
    }
    expect(await planned()).toBe(0);
    const ok = await http(`/sites/${a.site.id}/inspections`, { cookie, form: { intent: "routine", assigneeId: a.people.technician.id } });
    expect(ok.status).toBe(200);
    const rows = await db.select().from(schema.inspections).where(eq(schema.inspections.siteId, a.site.id));
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.every((r) => r.assigneeId === a.people.technician.id)).toBe(true);
  });

  it("attack: a new work order naming a made-up flag or finding, or another organisation's, is refused (400) in plain words", async () => {
    const a = await plantWithFlag("WoA");
    const b = await plantWithFlag("WoB");
    const theirs = await findingOf(b);
    const ours = await findingOf(a);
    const { cookie } = await signIn(a.people.lead.email, a.password);
    const path = `/sites/${a.siteId}/work-orders/new`;
    const base = { title: "Check the string", combiner: "B1-I1-C01" };
    const cases: [Record<string, string>, string][] = [
      [{ flagId: "not-a-flag" }, "The flag this work order came from is not one Sunsift knows."],
      [{ findingId: "1 or 1=1" }, "The finding this work order came from is not one Sunsift knows."],
      [{ flagId: b.flag.id }, "That flag is not on this site."],
      [{ findingId: theirs.finding.id }, "That drone finding is not on this site."],
    ];
    for (const [extra, message] of cases) {
      const r = await http(path, { cookie, form: { ...base, ...extra } });
      expect(r.status, JSON.stringify(extra)).toBe(400);
      expect(visible(r.body)).toContain(message);
    }
    expect(await db.select().from(schema.workOrders).where(eq(schema.workOrders.siteId, a.siteId))).toHaveLength(0);
    const ok = await http(path, { cookie, form: { ...base, flagId: a.flag.id, findingId: ours.finding.id } });
    expect(ok.status).toBe(302);
    const [wo] = await db.select().from(schema.workOrders).where(eq(schema.workOrders.siteId, a.siteId));
    expect(wo).toMatchObject({ flagId: a.flag.id, findingId: ours.finding.id });
  });

  it("a work order made from a drone finding starts from that finding (its string and class), and only on the finding's own site", async () => {
    const a = await plantWithFlag("WoPrefill");
    const b = await plantWithFlag("WoPrefillOther");
    const ours = await findingOf(a);
    const theirs = await findingOf(b);
    const { cookie } = await signIn(a.people.lead.email, a.password);
    const combiner = a.combiners[0]!.name;
    const form = await http(`/sites/${a.siteId}/work-orders/new?findingId=${ours.finding.id}`, { cookie });
    expect(form.status).toBe(200);
    expect(form.body).toContain(`Check string ${combiner}/${ours.finding.stringNumber}: bypass-diode substring in IR`);
    expect(form.body).toContain(`name="findingId" value="${ours.finding.id}"`);
    // Another organisation's finding prefills nothing.
    const foreign = await http(`/sites/${a.siteId}/work-orders/new?findingId=${theirs.finding.id}`, { cookie });
    expect(foreign.status).toBe(200);
    expect(foreign.body).not.toContain("in IR");
    expect(foreign.body).toContain("That finding was not found on this site.");
  });

  it("attack: a flight form whose file list is not JSON is answered 400, not 500", async () => {
    const a = await plantWithFlag("Presign");
    const { flight } = await findingOf(a);
    const { cookie } = await signIn(a.people.pilot.email, a.password);
    for (const files of ["{not json", "[1,", "\u0000"]) {
      const r = await http(`/sites/${a.siteId}/flights/${flight.id}`, { cookie, form: { intent: "presign", files } });
      expect(r.status, files).toBe(400);
      expect(r.body).toContain("Could not read the chosen files");
    }
  });

  it("attack: a malformed Origin header (Origin: ::::) is answered 400, not 500", async () => {
    const { people, password, site } = await createOrg("Origin");
    const { cookie } = await signIn(people.engineer.email, password);
    for (const origin of ["::::", "http://[", "https://exa mple.com"]) {
      for (const path of ["/login", `/sites/${site.id}/settings`, `/api/v1/sites/${site.id}/analysis`]) {
        const r = await http(path, { cookie, form: { email: "x@example.com", password: "y" }, origin });
        expect(r.status, `${origin} ${path}`).toBe(400);
        // (React Router refuses a form post to a page with such an Origin itself, in two words.)
        if (path.startsWith("/api/")) expect(r.body).toContain("Origin header is not a web address");
      }
      for (const path of [`/sites/${site.id}/settings.data`, `/api/v1/sites/${site.id}/analysis`]) {
        const r = await http(path, { cookie, headers: { "content-type": "application/json" }, body: "{}", origin });
        expect(r.status, `${origin} ${path}`).toBe(400);
      }
    }
  });
});

describe("what errors show", () => {
  it("attack: a failed analysis run shows plain words and a reference, not the database's error text", async () => {
    const { org, site, people, password } = await createOrg("RunErr");
    const secret = 'relation "org_secrets" does not exist at character 42';
    const [run] = await db.insert(schema.analysisRuns).values({ siteId: site.id, status: "failed", trigger: "manual", error: secret, finishedAt: new Date() }).returning();
    const t = await token(org.id, ["read"]);
    const api = await http(`/api/v1/sites/${site.id}/analysis/${run!.id}`, { headers: { authorization: `Bearer ${t}` } });
    expect(api.status).toBe(200);
    const ref = run!.id.replaceAll("-", "").slice(0, 8);
    expect(api.json<{ error: string }>().error).toBe(`The analysis could not finish (ref ${ref}). Try again; if it fails again, give your administrator this reference.`);
    const latest = await http(`/api/v1/sites/${site.id}/analysis`, { headers: { authorization: `Bearer ${t}` } });
    expect(latest.body).not.toContain("org_secrets");
    const { cookie } = await signIn(people.owner.email, password);
    const page = await http(`/sites/${site.id}`, { cookie });
    expect(page.status).toBe(200);
    expect(page.body).not.toContain("org_secrets");
    expect(visible(page.body)).toContain(`ref ${ref}`);
    // The reason stays in the run's row for whoever looks into it.
    const [row] = await db.select().from(schema.analysisRuns).where(eq(schema.analysisRuns.id, run!.id));
    expect(row!.error).toBe(secret);
  });
});

describe("caching of signed-in answers", () => {
  it("attack: pages, route data, CSV and JSON of a signed-in person carry Cache-Control: no-store (a shared computer's cache keeps none)", async () => {
    const { org, site, people, password } = await createOrg("NoStore");
    const { cookie } = await signIn(people.engineer.email, password);
    const t = await token(org.id, ["read"]);
    for (const path of [`/sites/${site.id}/flags`, `/sites/${site.id}/flags`, `/sites/${site.id}/settings`, "/portfolio", `/sites/${site.id}/flags.data`, `/sites/${site.id}/flags.csv`, `/sites/${site.id}/recovery.csv`, `/sites/${site.id}/data`]) {
      const r = await http(path, { cookie });
      expect(r.status, path).toBe(200);
      expect(r.headers.get("cache-control"), path).toBe("no-store");
    }
    for (const path of ["/api/v1/me", `/api/v1/sites/${site.id}/flags`, `/api/v1/sites/${site.id}/analysis`]) {
      const r = await http(path, { headers: { authorization: `Bearer ${t}` } });
      expect(r.status, path).toBe(200);
      expect(r.headers.get("cache-control"), path).toBe("no-store");
    }
    // Signing in (the answer that sets the cookie) is not stored either.
    const signedIn = await signIn(people.admin.email, password);
    expect(signedIn.res.headers.get("cache-control")).toBe("no-store");
  });
});
