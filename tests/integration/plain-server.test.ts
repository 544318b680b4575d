/**
 * The app as it runs outside the demo and without a proxy of ours in front: a second
 * scripts/serve.mjs on a port of its own, on the same database, without SUNSIFT_DEMO and without
 * TRUST_PROXY (the main test server has both).
 */
import type { ChildProcess } from "node:child_process";
import { startSecondServer, type SecondServer } from "../helpers/second-server";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "~/db/schema";
import { createOrg, db } from "../helpers/db";

let second: SecondServer;
let server: ChildProcess;
let BASE = "";

beforeAll(async () => {
  second = await startSecondServer(5, ["TRUST_PROXY", "SUNSIFT_DEMO"]);
  server = second.process;
  BASE = second.base;
});

afterAll(async () => {
  if (server.exitCode !== null) return;
  const gone = new Promise((r) => server.once("exit", r));
  server.kill("SIGTERM");
  await gone;
});

async function post(path: string, form: Record<string, string>, headers: Record<string, string> = {}) {
  return fetch(BASE + path, { method: "POST", body: new URLSearchParams(form), headers: { origin: BASE, ...headers }, redirect: "manual" });
}

async function signInHere(email: string, password: string) {
  const r = await post("/login", { email, password });
  expect(r.status).toBe(302);
  return r.headers.get("set-cookie")!.split(";")[0]!;
}

describe("outside the demo (SUNSIFT_DEMO unset)", () => {
  it("attack: the outbox, with its invitation and reset links, does not exist: 404, and Settings does not offer it", async () => {
    const org = await createOrg("NoDemo");
    const cookie = await signInHere(org.people.admin.email, org.password);
    const outbox = await fetch(`${BASE}/settings/outbox`, { headers: { cookie }, redirect: "manual" });
    expect(outbox.status).toBe(404);
    expect(await outbox.text()).not.toContain("outbox-mail");
    expect((await fetch(`${BASE}/settings/outbox.data`, { headers: { cookie }, redirect: "manual" })).status).toBe(404);
    const settings = await fetch(`${BASE}/settings`, { headers: { cookie } });
    expect(settings.status).toBe(200);
    const html = await settings.text();
    expect(html).toContain('href="/settings/tokens"');
    expect(html).not.toContain('href="/settings/outbox"');
    // Nor does "My e-mails" list what was sent.
    const mine = await fetch(`${BASE}/settings/notifications`, { headers: { cookie } });
    expect(await mine.text()).not.toContain("E-mails sent to me");
  });
});

describe("without TRUST_PROXY", () => {
  it("attack: a client's X-Forwarded-Proto is not believed: no HSTS, no Secure cookie", async () => {
    const org = await createOrg("NoProxy");
    const page = await fetch(`${BASE}/login`, { headers: { "x-forwarded-proto": "https" } });
    expect(page.headers.get("strict-transport-security")).toBeNull();
    const r = await post("/login", { email: org.people.pilot.email, password: org.password }, { "x-forwarded-proto": "https" });
    expect(r.status).toBe(302);
    expect(r.headers.get("set-cookie")).not.toMatch(/Secure/);
  });

  it("attack: a client's X-Forwarded-For (any entry) is not believed: the limits count the socket's address", async () => {
    const email = `plain-xff-${Date.now()}@example.com`;
    const r = await post("/login", { email, password: "wrong-password" }, { "x-forwarded-for": "10.77.0.1, 10.88.0.2" });
    expect(r.status).toBe(401);
    const rows = await db.select({ ip: schema.signInFailures.ip }).from(schema.signInFailures).where(eq(schema.signInFailures.email, email));
    expect(rows.map((x) => x.ip)).toEqual(["127.0.0.1"]);
  });
});
