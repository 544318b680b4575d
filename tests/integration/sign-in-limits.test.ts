/**
 * The sign-in and password-reset limits under attack: concurrent bursts, forged forwarded headers,
 * and what the forgot-password answer gives away. The test server runs with TRUST_PROXY=1 (a proxy
 * of ours in front); tests/integration/plain-server.test.ts checks a server without it.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import { createOrg, db } from "../helpers/db";
import { freshIp, http, signIn } from "../helpers/http";
import { captureSmtp } from "../helpers/smtp";
import * as schema from "../../app/db/schema";

let smtp: Awaited<ReturnType<typeof captureSmtp>>;
beforeAll(async () => {
  smtp = await captureSmtp();
});
afterAll(async () => {
  await smtp.close();
});

/** Addresses of this file only (the others use 10.x.y.z from freshIp). */
let burstIp = 0;
const nextBurstIp = () => {
  burstIp++;
  return `172.16.${burstIp >> 8}.${burstIp & 255}`;
};

const count = (xs: number[], v: number) => xs.filter((x) => x === v).length;
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

describe("sign-in limits under concurrency", () => {
  it("attack: 30 concurrent wrong guesses against one account get at most 5 evaluated, in every round", async () => {
    const org = await createOrg("Burst");
    const victims = [org.people.admin, org.people.engineer, org.people.lead, org.people.pilot];
    for (const victim of victims) {
      const statuses = await Promise.all(Array.from({ length: 30 }, (_, i) => signIn(victim.email, `wrong-guess-${i}`, nextBurstIp()).then((r) => r.res.status)));
      expect(count(statuses, 401) + count(statuses, 429)).toBe(30);
      expect(count(statuses, 401)).toBe(5);
      // The account is locked now, for the right password too.
      expect((await signIn(victim.email, org.password, nextBurstIp())).res.status).toBe(429);
    }
  });

  it("attack: 30 concurrent guesses from one address, at 30 accounts, get at most 20 evaluated, in every round", async () => {
    for (let round = 0; round < 3; round++) {
      const ip = nextBurstIp();
      const statuses = await Promise.all(Array.from({ length: 30 }, (_, i) => signIn(`spray-${round}-${i}-${Date.now()}@example.com`, "wrong-guess", ip).then((r) => r.res.status)));
      expect(count(statuses, 401)).toBe(20);
      expect(count(statuses, 429)).toBe(10);
    }
  });

  it("a right password clears the account's failures; a burst with it signs in", async () => {
    const org = await createOrg("BurstOk");
    for (let i = 0; i < 3; i++) expect((await signIn(org.people.owner.email, "wrong-password-x", nextBurstIp())).res.status).toBe(401);
    expect((await signIn(org.people.owner.email, org.password, nextBurstIp())).res.status).toBe(302);
    const left = await db.select().from(schema.signInFailures).where(eq(schema.signInFailures.email, org.people.owner.email));
    expect(left).toEqual([]);
  });
});

describe("forwarded headers behind our proxy (TRUST_PROXY=1)", () => {
  it("attack: an X-Forwarded-For entry the client wrote (left of our proxy's) does not choose the address the limits count", async () => {
    const email = `xff-${Date.now()}@example.com`;
    const real = nextBurstIp();
    const r = await http("/login", { form: { email, password: "wrong-password" }, headers: { "x-forwarded-for": `203.0.113.7, ${real}` } });
    expect(r.status).toBe(401);
    const rows = await db.select({ ip: schema.signInFailures.ip }).from(schema.signInFailures).where(eq(schema.signInFailures.email, email));
    expect(rows.map((x) => x.ip)).toEqual([real]);
    // Rotating the forged part does not make new addresses.
    const ip = nextBurstIp();
    const rotated = `rot-${Date.now()}@example.com`;
    for (let i = 0; i < 3; i++)
      expect((await http("/login", { form: { email: rotated, password: "x-wrong" }, headers: { "x-forwarded-for": `198.51.100.${i}, ${ip}` } })).status).toBe(401);
    const seen = await db.select({ ip: schema.signInFailures.ip }).from(schema.signInFailures).where(eq(schema.signInFailures.email, rotated));
    expect(seen.map((x) => x.ip)).toEqual([ip, ip, ip]);
  });

  it("X-Forwarded-Proto https from our proxy: HSTS and a Secure cookie; plain http: neither", async () => {
    const over = await http("/login", { headers: { "x-forwarded-proto": "https" } });
    expect(over.headers.get("strict-transport-security")).toMatch(/max-age=\d+/);
    const plain = await http("/login");
    expect(plain.headers.get("strict-transport-security")).toBeNull();
    const org = await createOrg("Hsts");
    const tls = await http("/login", { form: { email: org.people.pilot.email, password: org.password }, headers: { "x-forwarded-for": freshIp(), "x-forwarded-proto": "https" } });
    expect(tls.status).toBe(302);
    expect(tls.headers.get("set-cookie")).toMatch(/;\s*Secure/);
    expect(tls.headers.get("strict-transport-security")).toMatch(/max-age=\d+/);
  });
});

describe("password-reset requests", () => {
  it("attack: a flood of reset requests for one account sends at most 5 mails, answering the same each time", async () => {
    const org = await createOrg("ResetFlood");
    const email = org.people.lead.email;
    const before = smtp.messages.filter((m) => m.to.includes(email)).length;
    for (let i = 0; i < 8; i++) {
      const r = await http("/forgot-password", { form: { email }, headers: { "x-forwarded-for": nextBurstIp() } });
      expect(r.status).toBe(200);
      expect(r.body).toContain("If that address has an account");
    }
    const until = Date.now() + 20_000;
    while (Date.now() < until && smtp.messages.filter((m) => m.to.includes(email)).length - before < 5) await new Promise((res) => setTimeout(res, 200));
    await new Promise((res) => setTimeout(res, 4_000)); // time for any further job to run
    expect(smtp.messages.filter((m) => m.to.includes(email)).length - before).toBe(5);
    const [n] = await db.select({ n: sql<number>`count(*)::int` }).from(schema.passwordResets).where(eq(schema.passwordResets.userId, org.people.lead.id));
    expect(n!.n).toBe(5);
  });

  it("attack: one address asking for many accounts' resets is cut at 20; another address still gets its mail", async () => {
    const org = await createOrg("ResetSpray");
    const ip = nextBurstIp();
    for (let i = 0; i < 20; i++) expect((await http("/forgot-password", { form: { email: `someone-${i}-${Date.now()}@example.com` }, headers: { "x-forwarded-for": ip } })).status).toBe(200);
    const blocked = await http("/forgot-password", { form: { email: org.people.pilot.email }, headers: { "x-forwarded-for": ip } });
    expect(blocked.status).toBe(200);
    expect(blocked.body).toContain("If that address has an account");
    expect((await http("/forgot-password", { form: { email: org.people.owner.email }, headers: { "x-forwarded-for": nextBurstIp() } })).status).toBe(200);
    await smtp.waitFor(org.people.owner.email, /reset-password\//);
    await new Promise((res) => setTimeout(res, 3_000));
    expect(smtp.messages.some((m) => m.to.includes(org.people.pilot.email))).toBe(false);
  });

  it("attack: the forgot-password answer takes the same time for an address with an account and one without, and the mail still arrives", async () => {
    const orgs = [await createOrg("TimingA"), await createOrg("TimingB")];
    const existing = orgs.flatMap((o) => Object.values(o.people).map((p) => p.email));
    const time = async (email: string) => {
      const t = performance.now();
      const r = await http("/forgot-password", { form: { email }, headers: { "x-forwarded-for": nextBurstIp() } });
      const ms = performance.now() - t;
      expect(r.status).toBe(200);
      expect(r.body).toContain("If that address has an account");
      return ms;
    };
    await time(`warm-up-${Date.now()}@example.com`);
    const withAccount: number[] = [];
    const without: number[] = [];
    for (let i = 0; i < existing.length; i++) {
      withAccount.push(await time(existing[i]!));
      without.push(await time(`nobody-${i}-${Date.now()}@example.com`));
    }
    const a = median(withAccount);
    const b = median(without);
    // Alike: the account's lookup, token, mail row and SMTP delivery all happen later, in the worker.
    expect(Math.abs(a - b), `medians ${a.toFixed(1)} ms with an account, ${b.toFixed(1)} ms without`).toBeLessThan(Math.max(8, 0.35 * b));
    for (const email of existing) await smtp.waitFor(email, /reset-password\//, 30_000);
  });
});
