/**
 * The web process keeps the busiest screens (overview, flags, fly list, chart series, plant
 * positions) until the database records a change (app/services/change-feed.server.ts). These
 * tests change the database behind the running app's back, the way the worker or another web
 * process would, and check that the very next request sees the change.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "~/db/schema";
import { createOrg, db } from "../helpers/db";
import { http, signIn } from "../helpers/http";

let org: Awaited<ReturnType<typeof createOrg>>;
let engineer: string;
let combinerId: number;
const combinerName = "B1-I1-C07";

beforeAll(async () => {
  org = await createOrg("Cache");
  const [blk] = await db.insert(schema.blocks).values({ siteId: org.site.id, name: "B1" }).returning();
  const [c] = await db.insert(schema.devices).values({ siteId: org.site.id, kind: "combiner", name: combinerName, blockId: blk!.id, stringCount: 12 }).returning();
  combinerId = c!.id;
  await db.insert(schema.strings).values(Array.from({ length: 12 }, (_, i) => ({ combinerId, number: i + 1, modules: 28, x: i * 5, y: 0 })));
  engineer = (await signIn(org.people.engineer.email, org.password)).cookie!;
});

/** Warm the cache: ask until the page comes from the kept copy (the listener connects in the background). */
async function twice(path: string, cookie = engineer) {
  for (let i = 0; i < 50; i++) {
    const r = await http(path, { cookie });
    expect(r.status).toBe(200);
    if (r.headers.get("server-timing")?.includes("kept-answer")) return r;
    await new Promise((res) => setTimeout(res, 100));
  }
  throw new Error(`${path} never came from the page cache`);
}

describe("cached screens follow the database", () => {
  it("a flag written by another process shows on the very next flags page and API answer", async () => {
    const flagsPath = `/sites/${org.site.id}/flags?state=open`;
    const before = await twice(flagsPath);
    expect(before.body).not.toContain(combinerName);
    const api = await http(`/api/v1/sites/${org.site.id}/flags`, { cookie: engineer });
    expect(api.json<{ total: number }>().total).toBe(0);

    const [f] = await db
      .insert(schema.flags)
      .values({ siteId: org.site.id, combinerId, state: "new", firstDay: "2026-06-01", lastDay: "2026-06-09", stringsOut: 2, confidence: 0.9, lostKwhPerDay: 21.5, lostKwhToDate: 190 })
      .returning();
    const after = await http(flagsPath, { cookie: engineer });
    expect(after.body).toContain(combinerName);
    expect((await http(`/api/v1/sites/${org.site.id}/flags`, { cookie: engineer })).json<{ total: number }>().total).toBe(1);

    // Dismissed elsewhere: gone from the open list at once.
    await db.update(schema.flags).set({ state: "dismissed", open: false }).where(eq(schema.flags.id, f!.id));
    expect((await http(flagsPath, { cookie: engineer })).body).not.toContain(combinerName);
  });

  it("a renamed site shows on the next overview; a revoked session gets the sign-in page, not the kept page", async () => {
    const path = `/sites/${org.site.id}`;
    const { cookie } = await signIn(org.people.engineer.email, org.password);
    const first = await twice(path, cookie!);
    expect(first.body).toContain(org.site.name);
    await db.update(schema.sites).set({ name: `${org.site.name} renamed` }).where(eq(schema.sites.id, org.site.id));
    expect((await http(path, { cookie })).body).toContain(`${org.site.name} renamed`);

    await db.update(schema.sessions).set({ revokedAt: new Date() }).where(eq(schema.sessions.userId, org.people.engineer.id));
    const gone = await http(path, { cookie });
    expect(gone.status).toBe(302);
    expect(gone.location).toMatch(/^\/login\?next=/);
    engineer = (await signIn(org.people.engineer.email, org.password)).cookie!;
    await db.update(schema.sites).set({ name: org.site.name }).where(eq(schema.sites.id, org.site.id));
  });

  it("a kept page gets a fresh script nonce each time, matching its Content-Security-Policy", async () => {
    const path = `/sites/${org.site.id}/flags`;
    const nonces = new Set<string>();
    for (let i = 0; i < 3; i++) {
      const r = await http(path, { cookie: engineer });
      const csp = r.headers.get("content-security-policy") ?? "";
      const n = /'nonce-([^']+)'/.exec(csp)?.[1];
      expect(n, "the page's policy names a nonce").toBeTruthy();
      const inBody = [...r.body.matchAll(/<script[^>]*nonce="([^"]+)"/g)].map((m) => m[1]);
      expect(inBody.length).toBeGreaterThan(0);
      expect(new Set(inBody)).toEqual(new Set([n]));
      nonces.add(n!);
    }
    expect(nonces.size).toBe(3);
  });

  it("plant drawing data: columns of every positioned string and every combiner, an ETag answered with 304, a moved string seen at once", async () => {
    const path = `/sites/${org.site.id}/plant.json`;
    const r = await http(path, { cookie: engineer });
    expect(r.status).toBe(200);
    type Plant = { strings: { id: number[]; combinerId: number[]; number: number[]; x: number[]; y: number[] }; outputs: { day: string | null; id: number[]; name: string[] } };
    const body = r.json<Plant>().strings;
    expect(body.id).toHaveLength(12);
    expect(new Set(body.combinerId)).toEqual(new Set([combinerId]));
    expect([...body.number].sort((a, b) => a - b)).toEqual(Array.from({ length: 12 }, (_, i) => i + 1));
    expect(Math.max(...body.x)).toBe(55);
    // Not analysed yet: no outputs to colour by.
    expect(r.json<Plant>().outputs).toMatchObject({ day: null, id: [], name: [] });
    const etag = r.headers.get("etag")!;
    expect((await http(path, { cookie: engineer, headers: { "if-none-match": etag } })).status).toBe(304);

    await db.update(schema.strings).set({ x: 100 }).where(eq(schema.strings.combinerId, combinerId));
    const moved = await http(path, { cookie: engineer, headers: { "if-none-match": etag } });
    expect(moved.status).toBe(200);
    expect(Math.max(...moved.json<{ strings: { x: number[] } }>().strings.x)).toBe(100);
    // Another organisation's people get the plain 404.
    const other = await createOrg("Other");
    const outsider = (await signIn(other.people.engineer.email, other.password)).cookie!;
    expect((await http(path, { cookie: outsider })).status).toBe(404);
  });

  it("chart series: kept across flag changes, fresh once an analysis run finishes", async () => {
    const path = `/api/v1/sites/${org.site.id}/combiners/${combinerId}/series?days=30`;
    type Series = { days: { t: number[]; robustZ: (number | null)[] } };
    const empty = await twice(path);
    expect(empty.json<Series>().days.t).toEqual([]);
    // The kept answer is this session's alone: another organisation's person asking the same
    // address gets the plain 404, and a request without a session the JSON 401.
    const other = await createOrg("Series other");
    const outsider = (await signIn(other.people.engineer.email, other.password)).cookie!;
    expect((await http(path, { cookie: outsider })).status).toBe(404);
    expect((await http(path)).status).toBe(401);
    // The analysis writes its results, then marks its run done: the next request sees them.
    await db.insert(schema.combinerDays).values({ siteId: org.site.id, combinerId, day: "2026-06-09", validIntervals: 60, totalIntervals: 100, outputIndex: 0.9, peerMedianOi: 1, robustZ: -4.25, lostKwh: 12 });
    const [run] = await db.insert(schema.analysisRuns).values({ siteId: org.site.id, status: "running", trigger: "manual" }).returning();
    await db.update(schema.analysisRuns).set({ status: "done", finishedAt: new Date() }).where(eq(schema.analysisRuns.id, run!.id));
    const fresh = (await http(path, { cookie: engineer })).json<Series>();
    expect(fresh.days.robustZ).toEqual([-4.25]);
  });

  it("a kept page is not served once its session expires, though nothing else changed", async () => {
    const path = `/sites/${org.site.id}/flags`;
    const { cookie } = await signIn(org.people.engineer.email, org.password);
    const sid = await db.select({ id: schema.sessions.id, at: schema.sessions.createdAt }).from(schema.sessions).where(eq(schema.sessions.userId, org.people.engineer.id));
    const newest = sid.sort((a, b) => b.at.getTime() - a.at.getTime())[0]!.id;
    // The session ends in 2 s (this write is itself a change, so the page is rendered afresh and
    // kept under the new expiry); then nothing is written and the clock alone ends it.
    await db.update(schema.sessions).set({ expiresAt: new Date(Date.now() + 2_000) }).where(eq(schema.sessions.id, newest));
    await twice(path, cookie!);
    await new Promise((res) => setTimeout(res, 2_100));
    const after = await http(path, { cookie });
    expect(after.status).toBe(302);
    expect(after.location).toMatch(/^\/login\?next=/);
  });
});
