/**
 * Faults, on a Sunsift of its own (own PostgreSQL cluster on 54339 + 10 × TEST_SLOT, database, object store,
 * worker and web server; tests/helpers/stack.ts): SIGKILL in the middle of a large import,
 * a PostgreSQL restart under requests, the object store and the SMTP server down.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import pg from "pg";
import { siteSettingsSchema } from "../../app/domain/site-settings";
import { sha256 } from "../../app/services/password.server";
import { SAMPLE_SETTINGS } from "../helpers/db";
import { captureSmtp } from "../helpers/smtp";
import { LAYOUT } from "../helpers/imports";
import { stack } from "../helpers/stack";

// Ports of its own, moved by TEST_SLOT like the main test stack's, so parallel runs do not meet.
const SLOT = Number(process.env.TEST_SLOT ?? 0);
const S = stack({ name: "faults", pgPort: 54339 + SLOT * 10, appPort: 3129 + SLOT * 10, s3Port: 4598 + SLOT * 10, smtpPort: 2554 + SLOT * 10 });
const INTERRUPTED = "The import was interrupted (the server stopped) — nothing was loaded; start it again.";
const TOKEN = `ss_faults_${crypto.randomUUID()}`;
let client: pg.Pool;
let orgId: string;

async function q<T extends pg.QueryResultRow = Record<string, unknown>>(text: string, values: unknown[] = []) {
  return (await client.query<T>(text, values)).rows;
}

/** A site with the small layout, through the API. */
async function newSite(name: string): Promise<string> {
  const settings = siteSettingsSchema.parse({ ...SAMPLE_SETTINGS, name });
  const [site] = await q<{ id: string }>("insert into sites (org_id, name, latitude, longitude, timezone, settings) values ($1, $2, 37.2, -5.9, 'Europe/Madrid', $3) returning id", [orgId, name, JSON.stringify(settings)]);
  const r = await api(`/api/v1/sites/${site!.id}/layout`, { method: "POST", body: LAYOUT, headers: { "content-type": "text/csv" } });
  expect(r.status).toBe(200);
  return site!.id;
}

function api(path: string, init: RequestInit = {}) {
  return fetch(S.appUrl + path, { ...init, headers: { authorization: `Bearer ${TOKEN}`, ...(init.headers as Record<string, string>) } });
}

/** A long export of `rows` readings (two combiners, 5-minute steps from 1 January 2026). */
function bigExport(rows: number): Buffer {
  const parts: string[] = ["timestamp,device,metric,value\n"];
  const t0 = Date.UTC(2026, 0, 1);
  for (let i = 0; i < rows; i++) {
    const ts = new Date(t0 + Math.floor(i / 2) * 300_000).toISOString().replace(".000Z", "Z");
    parts.push(`${ts},B1-I1-C0${(i % 2) + 1},dc_current,${((i * 7919) % 1000) / 100}\n`);
  }
  return Buffer.from(parts.join(""));
}

/** Count and md5 of a site's readings by device name, so two sites compare. */
async function siteReadings(siteId: string) {
  const [r] = await q<{ n: number; h: string }>(
    `select count(*)::int as n, coalesce(md5(string_agg(d.name || ',' || r.metric || ',' || r.ts || ',' || r.value, '|' order by d.name, r.metric, r.ts)), '') as h
     from readings r join devices d on d.id = r.device_id where d.site_id = $1`,
    [siteId],
  );
  return r!;
}

async function importRow(id: string) {
  const [r] = await q<{ status: string; error: string | null; readings_loaded: number; progress_bytes: number }>("select status, error, readings_loaded::int as readings_loaded, progress_bytes::int as progress_bytes from imports where id = $1", [id]);
  return r!;
}

async function until<T>(what: string, fn: () => Promise<T | null | undefined | false>, ms = 60_000, step = 50): Promise<T> {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    const v = await fn().catch(() => null);
    if (v) return v;
    await new Promise((r) => setTimeout(r, step));
  }
  throw new Error(`timed out waiting for ${what}`);
}

async function sendExport(siteId: string, body: Buffer): Promise<string> {
  const r = await api(`/api/v1/sites/${siteId}/readings?format=long`, { method: "POST", body: new Uint8Array(body), headers: { "content-type": "text/csv", "content-length": String(body.length) } });
  expect(r.status).toBe(202);
  return ((await r.json()) as { importId: string }).importId;
}

beforeAll(async () => {
  S.prepare();
  // A pool reconnects after the cluster restarts in one test.
  client = new pg.Pool({ connectionString: S.databaseUrl, max: 2 });
  client.on("error", () => undefined);
  [{ id: orgId }] = (await q<{ id: string }>("select id from organisations limit 1")) as [{ id: string }];
  await q("insert into api_tokens (org_id, name, token_hash, prefix, scopes) values ($1, 'faults', $2, $3, '{write,read}')", [orgId, sha256(TOKEN), TOKEN.slice(0, 7)]);
  await S.up();
}, 180_000);

afterAll(async () => {
  await client?.end().catch(() => undefined);
  await S.stop();
}, 60_000);

describe("SIGKILL in the middle of a large import", () => {
  it("the import ends failed with the reason, nothing partial is in readings, and a re-run equals an undisturbed run", async () => {
    const ROWS = 400_000;
    const file = bigExport(ROWS);
    const victim = await newSite("Killed");
    const importId = await sendExport(victim, file);
    // Kill both processes as soon as the worker is streaming the file into staging.
    await until("the import to be running", async () => {
      const r = await importRow(importId);
      return r.status === "running" || r.status === "done" || r.status === "failed" ? r : null;
    }, 60_000, 10);
    await S.kill("worker");
    await S.kill("web");
    const atKill = await importRow(importId);
    expect(atKill.status, "the import finished before the kill: make the file larger").toBe("running");
    expect(await siteReadings(victim)).toEqual({ n: 0, h: "" });

    await S.up(["worker", "web"]);
    const after = await until("the sweep", async () => {
      const r = await importRow(importId);
      return r.status !== "running" ? r : null;
    });
    expect(after).toMatchObject({ status: "failed", error: INTERRUPTED, readings_loaded: 0 });
    expect(await siteReadings(victim)).toEqual({ n: 0, h: "" });
    // The status API says the same.
    const shown = (await (await api(`/api/v1/imports/${importId}`)).json()) as { status: string; error: string };
    expect(shown).toMatchObject({ status: "failed", error: INTERRUPTED });

    // Start it again (the same file), and compare with an undisturbed run on a twin site.
    const again = await sendExport(victim, file);
    const twin = await newSite("Undisturbed");
    const clean = await sendExport(twin, file);
    for (const id of [again, clean]) {
      const r = await until(`import ${id}`, async () => {
        const x = await importRow(id);
        return x.status === "done" || x.status === "failed" ? x : null;
      }, 120_000, 200);
      expect(r).toMatchObject({ status: "done", error: null, readings_loaded: ROWS });
    }
    const a = await siteReadings(victim);
    const b = await siteReadings(twin);
    expect(a.n).toBe(ROWS);
    expect(a).toEqual(b);
  }, 200_000);
});

describe("PostgreSQL restarts while requests run", () => {
  it("requests answer 503 in plain words (page and API), the app recovers without a restart, a queued job still runs", async () => {
    const siteId = await newSite("Restart");
    // A job queued just before the restart.
    const small = Buffer.from("timestamp,device,metric,value\n2026-06-01T12:00:00+02:00,B1-I1-C01,dc_current,8.25\n2026-06-01T12:05:00+02:00,B1-I1-C01,dc_current,8.5\n");
    await S.kill("worker");
    const queued = await sendExport(siteId, small);
    const login = () => fetch(`${S.appUrl}/login`);
    const sites = () => api("/api/v1/me");
    expect((await login()).status).toBe(200);
    expect((await sites()).status).toBe(200);

    // Requests keep running while the cluster stops and starts again: each answers 200 or a clean 503.
    const seen = new Map<number, number>();
    let running = true;
    const load = (async () => {
      while (running) {
        const r = await sites().catch(() => null);
        seen.set(r?.status ?? 0, (seen.get(r?.status ?? 0) ?? 0) + 1);
        await r?.text();
      }
    })();
    await S.pgAsync("stop");
    const home = await login();
    const json = await sites();
    const pageText = await home.text();
    const body = (await json.json()) as { error: string };
    await S.pgAsync("start");

    // Screens answer the error page with 503 once the database was found down.
    expect(home.status).toBe(503);
    expect(pageText).toContain("Temporarily unavailable");
    expect(json.status).toBe(503);
    expect(body).toEqual({ error: "The database is not answering right now. Your data is safe; try again in a moment." });
    expect(json.headers.get("retry-after")).toBe("5");

    // Back without restarting the web process.
    await until("the API to answer again", async () => (await sites()).status === 200, 30_000, 200);
    running = false;
    await load;
    expect([...seen.keys()].sort()).toEqual([200, 503]);
    // The job queued before the restart runs once the worker is there.
    await S.up(["worker"]);
    const done = await until("the queued import", async () => {
      const r = await importRow(queued);
      return r.status === "done" || r.status === "failed" ? r : null;
    }, 60_000, 200);
    expect(done).toMatchObject({ status: "done", readings_loaded: 2 });
  }, 120_000);

  it("a screen while the database is down: the error page says so with 503", async () => {
    // Sign in first (needs the database), then stop it and open a screen.
    const form = new URLSearchParams({ email: "engineer@sunsift.test", password: "sunsift-demo" });
    const res = await fetch(`${S.appUrl}/login`, { method: "POST", body: form, redirect: "manual", headers: { origin: S.appUrl, "x-forwarded-for": "10.9.9.9" } });
    const cookie = res.headers.get("set-cookie")!.split(";")[0]!;
    S.pg("stop");
    const page = await fetch(`${S.appUrl}/portfolio`, { headers: { cookie } }).catch((e: unknown) => e as Error);
    S.pg("start");
    expect(page).toBeInstanceOf(Response);
    const r = page as Response;
    expect(r.status).toBe(503);
    const html = (await r.text()).replace(/<!-- -->/g, "").replace(/&#x27;/g, "'");
    expect(html).toContain("Temporarily unavailable");
    expect(html).toContain("The database is not answering right now. Your data is safe; try again in a moment.");
    await until("the screen to come back", async () => (await fetch(`${S.appUrl}/portfolio`, { headers: { cookie } })).status === 200, 30_000, 200);
  }, 60_000);

  it("attack: /healthz while the database is down says so in plain words with a reference, not the database's error text", async () => {
    S.pg("stop");
    const r = await fetch(`${S.appUrl}/healthz`).catch((e: unknown) => e as Error);
    S.pg("start");
    expect(r).toBeInstanceOf(Response);
    const res = r as Response;
    expect(res.status).toBe(503);
    expect(res.headers.get("cache-control")).toBe("no-store");
    const body = (await res.json()) as { status: string; database: string; error: string };
    expect(body).toMatchObject({ status: "degraded", database: "down" });
    expect(body.error).toMatch(/^The database did not answer \(ref [0-9a-f]{8}\)\.$/);
    // The database's own words are in the server's log, under that reference.
    const ref = /ref ([0-9a-f]{8})/.exec(body.error)![1]!;
    await until("the log line", async () => readFileSync(join(S.out, "web.log"), "utf8").includes(`(ref ${ref})`), 5_000, 100);
    await until("the database to come back", async () => (await fetch(`${S.appUrl}/healthz`)).status === 200, 30_000, 200);
  }, 60_000);
});

describe("object store and SMTP down", () => {
  it("an upload while the store is down says so; nothing else breaks; it works again once the store is back", async () => {
    await S.up(["worker", "web"]);
    const siteId = await newSite("StoreDown");
    await S.kill("s3", "SIGKILL");
    const body = Buffer.from("timestamp,device,metric,value\n2026-06-01T12:00:00+02:00,B1-I1-C01,dc_current,8.25\n");
    const r = await api(`/api/v1/sites/${siteId}/readings?format=long`, { method: "POST", body: new Uint8Array(body), headers: { "content-type": "text/csv", "content-length": String(body.length) } });
    expect(r.status).toBe(503);
    expect(await r.json()).toEqual({ error: "The file store is not answering, so the file was not stored and nothing was imported. Try again in a moment." });
    // Screens and the rest of the API still answer.
    expect((await api("/api/v1/me")).status).toBe(200);
    await S.up(["s3"]);
    const id = await sendExport(siteId, body);
    const done = await until("the import after the store came back", async () => {
      const x = await importRow(id);
      return x.status === "done" || x.status === "failed" ? x : null;
    }, 60_000, 200);
    expect(done).toMatchObject({ status: "done", readings_loaded: 1 });
  }, 90_000);

  it("an invitation while SMTP is down is saved and says it will be retried; the queued e-mail goes out once SMTP is back", async () => {
    await S.up(["s3", "worker", "web"]);
    const form = new URLSearchParams({ email: "admin@sunsift.test", password: "sunsift-demo" });
    const res = await fetch(`${S.appUrl}/login`, { method: "POST", body: form, redirect: "manual", headers: { origin: S.appUrl, "x-forwarded-for": "10.9.9.10" } });
    const cookie = res.headers.get("set-cookie")!.split(";")[0]!;
    const invite = new URLSearchParams({ intent: "invite", name: "New Pilot", email: "new.pilot@example.com", roles: "pilot" });
    const r = await fetch(`${S.appUrl}/settings?index`, { method: "POST", body: invite, headers: { cookie, origin: S.appUrl } });
    expect(r.status).toBe(200);
    const html = (await r.text()).replace(/<!-- -->/g, "");
    expect(html).toMatch(/Invitation saved, but the mail server did not answer \(connect ECONNREFUSED 127\.0\.0\.1:2554\)\. It will be retried\./);
    const [mail] = await q<{ status: string; attempts: number }>("select status, attempts from emails where \"to\" = 'new.pilot@example.com'");
    expect(mail).toEqual({ status: "queued", attempts: 1 });
    // SMTP back: the worker's minute job retries what is queued.
    const smtp = await captureSmtp(2554);
    try {
      const raw = await smtp.waitFor("new.pilot@example.com", /invited/, 90_000);
      expect(raw).toContain("/invite/");
      await until("the e-mail to be marked sent", async () => (await q<{ status: string }>("select status from emails where \"to\" = 'new.pilot@example.com'"))[0]?.status === "sent", 10_000, 200);
    } finally {
      await smtp.close();
    }
  }, 120_000);
});
