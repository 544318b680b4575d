import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { and, eq, sql } from "drizzle-orm";
import { createOrg, db, SAMPLE_SETTINGS } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import * as schema from "../../app/db/schema";
import { createToken } from "../../app/models/tokens.server";

const SMALL = readFileSync(new URL("../../fixtures/small/layout.csv", import.meta.url), "utf8");

async function tokenFor(orgId: string, userId: string) {
  return createToken({ orgId, userId, sessionId: "", email: "", name: "", roles: ["admin"] }, "test", ["write"]);
}

async function layoutState(siteId: string) {
  const r = await db.execute<{ n: number; h: string }>(sql`
    select count(*)::int as n, coalesce(md5(string_agg(d.id || ':' || d.name || ':' || coalesce(d.string_count, 0) || ':' || s.number || ':' || s.modules || ':' || coalesce(s.x, -1), ',' order by d.id, s.number)), '') as h
    from devices d left join strings s on s.combiner_id = d.id where d.site_id = ${siteId}`);
  return r.rows[0]!;
}

function multipart(fields: Record<string, string>, file?: { name: string; content: string }) {
  const fd = new FormData();
  for (const [k, v] of Object.entries(fields)) fd.append(k, v);
  if (file) fd.append("file", new Blob([file.content], { type: "text/csv" }), file.name);
  return fd;
}

describe("layout import", () => {
  it("previews totals, commits, and re-imports in place keeping identities", async () => {
    const { people, password, site } = await createOrg("Layout");
    const { cookie } = await signIn(people.engineer.email, password);
    const preview = await http(`/sites/${site.id}/layout`, { cookie, body: multipart({ intent: "preview" }, { name: "layout.csv", content: SMALL }) });
    expect(preview.status).toBe(200);
    const lines = SMALL.trim().split("\n").length - 1;
    expect(preview.body).toContain(`1 blocks · 1 inverters · 4 combiners · ${lines} strings`);
    expect((await layoutState(site.id)).n).toBe(0); // preview changes nothing

    const commit = await http(`/sites/${site.id}/layout`, { cookie, form: { intent: "commit", text: SMALL } });
    expect(commit.status).toBe(200);
    const combiners = await db.select().from(schema.devices).where(and(eq(schema.devices.siteId, site.id), eq(schema.devices.kind, "combiner")));
    expect(combiners).toHaveLength(4);
    const strings = await db.select().from(schema.strings).where(eq(schema.strings.combinerId, combiners[0]!.id));
    expect(strings.length).toBe(combiners[0]!.stringCount);

    // A corrected file (module count fixed on one string) updates in place.
    const corrected = SMALL.replace(/^(B1,B1-I1,B1-I1-C01,1,)28,/m, "$127,");
    await http(`/sites/${site.id}/layout`, { cookie, form: { intent: "commit", text: corrected } });
    const after = await db.select().from(schema.devices).where(and(eq(schema.devices.siteId, site.id), eq(schema.devices.kind, "combiner")));
    expect(after.map((c) => c.id).sort()).toEqual(combiners.map((c) => c.id).sort());
    const [s1] = await db.select().from(schema.strings).where(and(eq(schema.strings.combinerId, after.find((c) => c.name === "B1-I1-C01")!.id), eq(schema.strings.number, 1)));
    expect(s1!.modules).toBe(27);

    const page = await http(`/sites/${site.id}/layout`, { cookie });
    expect(page.body).toContain("B1-I1-C01");
  });

  const BAD: [string, string, RegExp][] = [
    ["empty file", "", /empty/i],
    ["missing columns", "block,inverter,combiner\nB1,I1,C1\n", /missing.*(string|modules)/i],
    ["duplicate string", "block,inverter,combiner,string,modules\nB1,B1-I1,C1,1,28\nB1,B1-I1,C1,1,28\n", /line 3.*duplicate|duplicate/i],
    ["non-numeric module count", "block,inverter,combiner,string,modules\nB1,B1-I1,C1,1,twenty\n", /modules/i],
    ["string that is not a number", "block,inverter,combiner,string,modules\nB1,B1-I1,C1,S-A,28\n", /must be its number/],
  ];
  for (const [what, text, reason] of BAD) {
    it(`refuses ${what}, naming the line, and changes nothing`, async () => {
      const { people, password, site } = await createOrg("BadLayout");
      const { cookie } = await signIn(people.engineer.email, password);
      await http(`/sites/${site.id}/layout`, { cookie, form: { intent: "commit", text: SMALL } });
      const before = await layoutState(site.id);
      const r = await http(`/sites/${site.id}/layout`, { cookie, form: { intent: "commit", text } });
      expect(r.status).toBe(400);
      expect(r.body).toContain("Nothing was changed");
      expect(r.body).toMatch(reason);
      if (text) expect(r.body).toMatch(/Line \d+/);
      expect(await layoutState(site.id)).toEqual(before);
    });
  }

  it("refuses to change the string count of a combiner that has readings", async () => {
    const { people, password, site } = await createOrg("History");
    const { cookie } = await signIn(people.engineer.email, password);
    await http(`/sites/${site.id}/layout`, { cookie, form: { intent: "commit", text: SMALL } });
    const [c] = await db.select().from(schema.devices).where(and(eq(schema.devices.siteId, site.id), eq(schema.devices.name, "B1-I1-C01")));
    await db.execute(sql`select ensure_reading_partitions('2026-10-01', '2026-10-02')`);
    await db.execute(sql`insert into readings values (${c!.id}, 1, '2026-10-01T12:00:00Z', 100)`);
    const before = await layoutState(site.id);
    const fewer = SMALL.split("\n").filter((l) => !/^B1,B1-I1,B1-I1-C01,1,/.test(l)).join("\n");
    const r = await http(`/sites/${site.id}/layout`, { cookie, form: { intent: "commit", text: fewer } });
    expect(r.status).toBe(400);
    expect(r.body).toMatch(/B1-I1-C01/);
    expect(await layoutState(site.id)).toEqual(before);
  });
});

describe("layout and site API", () => {
  it("creates a site from JSON, loads its layout from text/csv, and hides it from other organisations", async () => {
    const mine = await createOrg("Api");
    const other = await createOrg("ApiOther");
    const token = await tokenFor(mine.org.id, mine.people.admin.id);
    const otherToken = await tokenFor(other.org.id, other.people.admin.id);
    const bad = await http("/api/v1/sites", { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: JSON.stringify({ ...SAMPLE_SETTINGS, latitude: 200 }) });
    expect(bad.status).toBe(400);
    expect(bad.json<{ issues: { path: string; message: string }[] }>().issues[0]).toMatchObject({ path: "latitude" });

    const created = await http("/api/v1/sites", { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: JSON.stringify({ ...SAMPLE_SETTINGS, name: "API site" }) });
    expect(created.status).toBe(201);
    const { id } = created.json<{ id: string }>();
    const [row] = await db.select().from(schema.sites).where(eq(schema.sites.id, id));
    expect(row!.orgId).toBe(mine.org.id);

    const layout = await http(`/api/v1/sites/${id}/layout`, { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "text/csv" }, body: SMALL });
    expect(layout.status).toBe(200);
    expect(layout.json()).toMatchObject({ blocks: 1, inverters: 1, combiners: 4 });

    const foreign = await http(`/api/v1/sites/${id}/layout`, { method: "POST", headers: { authorization: `Bearer ${otherToken}`, "content-type": "text/csv" }, body: SMALL });
    expect(foreign.status).toBe(404);
    const readOnly = await createToken({ orgId: mine.org.id, userId: mine.people.admin.id, sessionId: "", email: "", name: "", roles: ["admin"] }, "ro", ["read"]);
    expect((await http(`/api/v1/sites/${id}/layout`, { method: "POST", headers: { authorization: `Bearer ${readOnly}` }, body: SMALL })).status).toBe(403);
  });
});
