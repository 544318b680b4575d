/**
 * Request handling against hostile input: form field names that reach a prototype, where the
 * sign-in page sends people afterwards, cross-site posts with the session cookie, and the smaller
 * checks of ids, error texts and caching.
 */
import { randomBytes } from "node:crypto";
import { describe, expect, it } from "vitest";
import * as schema from "../../app/db/schema";
import { sha256 } from "../../app/services/password.server";
import { createOrg, db, SAMPLE_SETTINGS } from "../helpers/db";
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
