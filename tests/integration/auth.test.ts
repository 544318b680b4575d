import { describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import { createOrg, db } from "../helpers/db";
import { BASE, freshIp, http, signIn } from "../helpers/http";
import * as schema from "../../app/db/schema";

describe("sign-in", () => {
  it("accepts the right password and sets an httpOnly, SameSite=Lax session cookie", async () => {
    const { people, password } = await createOrg("Auth");
    const { res, cookie } = await signIn(people.engineer.email, password);
    expect(res.status).toBe(302);
    const set = res.headers.get("set-cookie")!;
    expect(set).toMatch(/HttpOnly/i);
    expect(set).toMatch(/SameSite=Lax/i);
    expect(set).not.toMatch(/Secure/); // plain http on loopback; Secure is added behind https
    expect((await http("/portfolio", { cookie })).status).toBe(200);
  });

  it("answers the same message for a wrong password and an unknown e-mail", async () => {
    const { people } = await createOrg("Auth");
    const wrongPw = await signIn(people.engineer.email, "not-the-password");
    const unknown = await signIn("nobody-here@example.com", "whatever-password");
    expect(wrongPw.res.status).toBe(401);
    expect(unknown.res.status).toBe(401);
    expect(wrongPw.cookie).toBeNull();
    const msg = "That e-mail and password do not match an active account.";
    expect(wrongPw.res.body).toContain(msg);
    expect(unknown.res.body).toContain(msg);
  });

  it("locks an account after 5 failures in 15 minutes, even with the right password", async () => {
    const { people, password } = await createOrg("Rate");
    for (let i = 0; i < 5; i++) expect((await signIn(people.lead.email, "wrong-password-x")).res.status).toBe(401);
    const locked = await signIn(people.lead.email, password);
    expect(locked.res.status).toBe(429);
    expect(locked.res.body).toContain("Too many failed attempts");
    expect(locked.cookie).toBeNull();
  });

  it("limits one address to 20 failures across accounts", async () => {
    const ip = freshIp() + "9";
    for (let i = 0; i < 20; i++) await signIn(`spray-${i}@example.com`, "wrong-password-x", ip);
    const { people, password } = await createOrg("RateIp");
    expect((await signIn(people.lead.email, password, ip)).res.status).toBe(429);
    expect((await signIn(people.lead.email, password)).res.status).toBe(302);
  });

  it("sign-out revokes the session at once, even if the cookie is replayed", async () => {
    const { people, password } = await createOrg("Out");
    const { cookie } = await signIn(people.pilot.email, password);
    expect((await http("/portfolio", { cookie })).status).toBe(200);
    const out = await http("/logout", { method: "POST", cookie });
    expect(out.status).toBe(302);
    const replay = await http("/portfolio", { cookie });
    expect(replay.status).toBe(302);
    expect(replay.location).toMatch(/^\/login/);
  });

  it("deactivation by an admin ends that person's sessions at once", async () => {
    const { people, password } = await createOrg("Deact");
    const tech = await signIn(people.technician.email, password);
    const admin = await signIn(people.admin.email, password);
    expect((await http("/portfolio", { cookie: tech.cookie })).status).toBe(200);
    const r = await http("/settings", { cookie: admin.cookie, form: { intent: "deactivate", userId: people.technician.id } });
    expect(r.status).toBe(200);
    expect((await http("/portfolio", { cookie: tech.cookie })).status).toBe(302);
    expect((await signIn(people.technician.email, password)).res.status).toBe(401);
    const [m] = await db.select().from(schema.memberships).where(eq(schema.memberships.userId, people.technician.id));
    expect(m!.active).toBe(false);
  });

  it("refuses a form posted from another site", async () => {
    const { people, password } = await createOrg("Csrf");
    const admin = await signIn(people.admin.email, password);
    // React Router refuses a mismatched Origin itself (400); our middleware refuses what browsers
    // mark cross-site even without an Origin header (403).
    const r = await http("/settings/tokens", { cookie: admin.cookie, form: { name: "x", scope: "read" }, origin: "https://evil.example.com" });
    expect([400, 403]).toContain(r.status);
    const r2 = await http("/settings/tokens", { cookie: admin.cookie, form: { name: "x", scope: "read" }, origin: null, headers: { "sec-fetch-site": "cross-site" } });
    expect(r2.status).toBe(403);
    const count = await db.select({ n: sql<number>`count(*)::int` }).from(schema.apiTokens).where(eq(schema.apiTokens.orgId, (await db.select().from(schema.memberships).where(eq(schema.memberships.userId, people.admin.id)))[0]!.orgId));
    expect(count[0]!.n).toBe(0);
  });

  it("a tampered session cookie is treated as signed out", async () => {
    const { people, password } = await createOrg("Tamper");
    const { cookie } = await signIn(people.admin.email, password);
    const bad = cookie!.slice(0, -3) + (cookie!.endsWith("A") ? "BBB" : "AAA");
    expect((await http("/portfolio", { cookie: bad })).status).toBe(302);
  });
});

describe("API tokens", () => {
  it("is shown once, stored hashed, answers /api/v1/me with its organisation and scopes, and stops on revoke", async () => {
    const { org, people, password } = await createOrg("Tok");
    const admin = await signIn(people.admin.email, password);
    const created = await http("/settings/tokens", { cookie: admin.cookie, form: { name: "SCADA exporter", scope: "write" } });
    expect(created.status).toBe(200);
    const token = /data-testid="new-token">([^<]+)</.exec(created.body)?.[1];
    expect(token).toMatch(/^ss_/);
    const [row] = await db.select().from(schema.apiTokens).where(eq(schema.apiTokens.orgId, org.id));
    expect(row!.tokenHash).not.toContain(token!);
    expect(row!.tokenHash).toHaveLength(64);

    const me = await http("/api/v1/me", { headers: { authorization: `Bearer ${token}` } });
    expect(me.status).toBe(200);
    expect(me.json()).toMatchObject({ organisation: { id: org.id }, scopes: ["write"] });

    const list = await http("/settings/tokens", { cookie: admin.cookie });
    expect(list.body).not.toContain(token!);

    await http("/settings/tokens", { cookie: admin.cookie, form: { intent: "revoke", id: row!.id } });
    expect((await http("/api/v1/me", { headers: { authorization: `Bearer ${token}` } })).status).toBe(401);
  });

  it("refuses a missing or unknown token with 401", async () => {
    expect((await http("/api/v1/me")).status).toBe(401);
    expect((await http("/api/v1/me", { headers: { authorization: "Bearer nope" } })).status).toBe(401);
  });

  it("the demo token answers for the demo organisation with admin scope", async () => {
    const me = await http("/api/v1/me", { headers: { authorization: "Bearer sunsift-demo-token" } });
    expect(me.status).toBe(200);
    expect(me.json()).toMatchObject({ organisation: { name: "Demo Solar Operations" }, scopes: ["admin"] });
  });
});

describe("health", () => {
  it("answers ok when the app and database are up", async () => {
    const r = await fetch(`${BASE}/healthz`);
    expect(r.status).toBe(200);
    expect(await r.json()).toMatchObject({ status: "ok", database: "up" });
  });
});
