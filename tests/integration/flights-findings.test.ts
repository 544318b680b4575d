import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { sha256 } from "../../app/services/password.server";
import { crossReferenceSite, confirmImages, presignImages } from "../../app/models/findings.server";
import { db } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import { findingCount, flagState, insertFlight, plantWithFlag } from "./flights-fixture";

function csvForm(intent: string, csv: string): FormData {
  const fd = new FormData();
  fd.set("intent", intent);
  fd.set("file", new File([csv], "findings.csv", { type: "text/csv" }));
  return fd;
}

async function token(orgId: string, scopes: string[] = ["write"]) {
  const t = `ss_test_${crypto.randomUUID()}`;
  await db.insert(schema.apiTokens).values({ orgId, name: "flights test", tokenHash: sha256(t), prefix: t.slice(0, 7), scopes });
  return t;
}

describe("flight log", () => {
  it("a pilot logs a flight; conditions below the site's IR settings are warned about in plain words", async () => {
    const p = await plantWithFlag("FlightLog");
    const { cookie } = await signIn(p.people.pilot.email, p.password);
    const bad = await http(`/sites/${p.siteId}/flights`, { cookie, form: { startedLocal: "2026-10-21T13:30", pilotName: "", aircraft: "quad", poaWm2: "480" } });
    expect(bad.status).toBe(400);
    expect(bad.body).toContain("Tick the blocks the flight covered");
    const r = await http(`/sites/${p.siteId}/flights`, {
      cookie,
      form: { startedLocal: "2026-10-21T13:30", durationMin: "80", blockIds: [String(p.blocks[0]!.id)], pilotName: "Pilot P", aircraft: "quad", cameraText: "640×512, 13 mm", altitudeM: "25", poaWm2: "480", windKmh: "12", cloudOkta: "1", ambientC: "22", dataArchived: "on", archiveLocation: "NAS /ir" },
    });
    expect(r.status).toBe(302);
    const id = /\/flights\/([0-9a-f-]{36})$/.exec(r.location ?? "")?.[1];
    expect(id).toBeTruthy();
    const [row] = await db.select().from(schema.flights).where(eq(schema.flights.id, id!));
    // 13:30 in Madrid on 21 October (CEST, UTC+2) is 11:30 UTC
    expect(row!.startedAt.toISOString()).toBe("2026-10-21T11:30:00.000Z");
    expect(row).toMatchObject({ poaWm2: 480, windKmh: 12, cloudOkta: 1, dataArchived: true, archiveLocation: "NAS /ir", blockIds: [p.blocks[0]!.id] });
    const page = await http(`/sites/${p.siteId}/flights/${id}`, { cookie });
    expect(page.status).toBe(200);
    expect(page.body).toContain("POA 480 W/m² is below the 600 W/m² minimum for this inspection");
    expect(page.body).toContain("visual line of sight");
  });
});

describe("findings import and cross-reference", () => {
  it("a bad file is refused whole with its line errors; the database is unchanged", async () => {
    const p = await plantWithFlag("FindBad");
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    const { cookie } = await signIn(p.people.pilot.email, p.password);
    const csv = "string,class,delta_t_k,image,notes\nB1-I1-C01/7,string offline,4.0,ir-1.png,ok line\nB1-I1-C01/13,string offline,,,\nB9-I9-C99/1,soiling,,,\nB1-I1-C02/1,melted frame,,,\n";
    const r = await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie, body: csvForm("import", csv) });
    expect(r.status).toBe(400);
    expect(r.body).toContain("Nothing was changed");
    expect(r.body).toContain("Line 3: combiner B1-I1-C01 has no string 13");
    expect(r.body).toContain("Line 4: no combiner named");
    expect(r.body).toContain("Line 5: unknown class");
    expect(await findingCount(p.siteId)).toBe(0);
    expect((await flagState(p.flag.id)).state).toBe("new");
    expect(await db.select().from(schema.flagEvents).where(eq(schema.flagEvents.flagId, p.flag.id))).toHaveLength(0);
  });

  it("a good file turns the matching flag explained, names the string, and keeps the other flag needing a flight", async () => {
    const p = await plantWithFlag("FindGood");
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    const { cookie } = await signIn(p.people.pilot.email, p.password);
    // x,y 110,31 is 1.4 m from B1-I1-C02 string 3 (110, 30): resolved to it
    const csv = "string,x,y,class,delta_t_k,image,notes\nB1-I1-C01/7,,,String Offline,4.0,ir-001.png,whole string warm\n,110,31.4,cell hot spot,11.8,,one cell\nB2-I1-C01/4,,,bypass-diode substring,6.8,,\n";
    const r = await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie, body: csvForm("import", csv) });
    expect(r.status).toBe(200);
    expect(r.body).toContain("3 findings imported");
    const rows = await db.select().from(schema.findings).where(eq(schema.findings.siteId, p.siteId));
    expect(rows.map((f) => [f.combinerId, f.stringNumber, f.classKey]).sort()).toEqual(
      [[p.combiners[0]!.id, 7, "string_offline"], [p.combiners[1]!.id, 3, "cell_hot_spot"], [p.combiners[2]!.id, 4, "bypass_diode_substring"]].sort(),
    );
    const imgs = await db.select().from(schema.findingImages);
    expect(imgs.filter((i) => rows.some((f) => f.id === i.findingId)).map((i) => [i.fileName, i.objectKey])).toEqual([["ir-001.png", null]]);
    const f = await flagState(p.flag.id);
    expect(f.state).toBe("explained");
    expect(f.explainedFraction).toBe(1);
    expect(f.stateReason).toContain("Check connectors, fuse and cable of B1-I1-C01 string 7 first.");
    const events = await db.select().from(schema.flagEvents).where(eq(schema.flagEvents.flagId, p.flag.id));
    expect(events.map((e) => [e.fromState, e.toState])).toEqual([["new", "explained"]]);
    // a third of one module of 28 on a two-string flag: 1/84 ÷ 2 of the deficit
    const o = await flagState(p.otherFlag.id);
    expect(o.state).toBe("needs flight");
    expect(o.explainedFraction).toBeCloseTo(1 / 168, 3);
    const page = await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie });
    expect(page.body).toContain("B1-I1-C01 → string 7");
  });

  it("never overrides a flag people moved on, and is idempotent", async () => {
    const p = await plantWithFlag("FindKeep", { state: "in field" });
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    await db.insert(schema.findings).values({ flightId: flight.id, siteId: p.siteId, stringId: (await db.select().from(schema.strings).where(eq(schema.strings.combinerId, p.combiners[0]!.id)))[0]!.id, combinerId: p.combiners[0]!.id, stringNumber: 1, classKey: "string_offline", source: "manual" });
    const s1 = await crossReferenceSite(p.siteId);
    const s2 = await crossReferenceSite(p.siteId);
    expect((await flagState(p.flag.id)).state).toBe("in field");
    expect((await flagState(p.flag.id)).explainedFraction).toBe(1);
    expect(s1).toMatchObject({ flags: 2, explained: 0, needsFlight: 1, changed: 1 });
    expect(s2.changed).toBe(0);
  });

  it("images: presigned PUT to the object store, confirmed only when the object arrived", async () => {
    const p = await plantWithFlag("FindImg");
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    const { cookie } = await signIn(p.people.pilot.email, p.password);
    await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie, body: csvForm("import", "string,class,image\nB1-I1-C01/7,string offline,ir-7.png\nB1-I1-C01/8,soiling,ir-8.png\n") });
    const png = Buffer.from("89504e470d0a1a0a", "hex");
    const r = await presignImages(p.siteId, flight.id, [{ name: "ir-7.png", size: png.length, type: "image/png" }, { name: "ir-8.png", size: 8, type: "image/png" }, { name: "other.png", size: 8, type: "image/png" }, { name: "x.exe", size: 8, type: "application/octet-stream" }]);
    expect(r.unmatched).toEqual(["other.png"]);
    expect(r.refused).toEqual(["x.exe"]);
    expect(r.uploads.map((u) => u.name)).toEqual(["ir-7.png", "ir-8.png"]);
    const put = await fetch(r.uploads[0]!.url, { method: "PUT", body: png, headers: { "content-type": "image/png" } });
    expect(put.status).toBe(200);
    expect(await confirmImages(p.siteId, flight.id, r.uploads.map((u) => u.imageId))).toEqual({ confirmed: 1, missing: 1, refused: [] });
    const page = await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie });
    expect(page.body).toContain("ir-8.png (to upload)");
    expect(page.body).toContain('aria-label="Open ir-7.png"');
  });
});

describe("API", () => {
  it("POST findings as text/csv, GET the fly list as JSON; another organisation's token gets 404", async () => {
    const p = await plantWithFlag("FindApi");
    const other = await plantWithFlag("FindApiOther");
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    const t = await token(p.org.id);
    const auth = { authorization: `Bearer ${t}`, "content-type": "text/csv" };

    const before = await http(`/api/v1/sites/${p.siteId}/fly-list`, { headers: auth });
    expect(before.status).toBe(200);
    const b = before.json<{ blocks: { block: string; rank: number; flags: number; unexplainedKwhPerDay: number; combiners: { combiner: string; strings: number[] }[] }[]; flightWindows: { model: string; days: unknown[] } }>();
    expect(b.blocks.map((x) => [x.rank, x.block, x.flags, x.unexplainedKwhPerDay])).toEqual([[1, "B2", 1, 130], [2, "B1", 1, 60]]);
    expect(b.blocks[1]!.combiners[0]!.strings).toHaveLength(12);
    expect(b.flightWindows.days).toHaveLength(7);
    expect(b.flightWindows.model).toContain("Haurwitz");

    const bad = await http(`/api/v1/sites/${p.siteId}/findings?flightId=${flight.id}`, { method: "POST", headers: auth, body: "string,class\nB1-I1-C01/7,nothing\n" });
    expect(bad.status).toBe(400);
    expect(bad.json<{ errors: unknown[] }>().errors).toEqual([{ line: 2, reason: 'unknown class "nothing"' }]);
    expect(await findingCount(p.siteId)).toBe(0);

    const ok = await http(`/api/v1/sites/${p.siteId}/findings?flightId=${flight.id}`, { method: "POST", headers: auth, body: "string,class,delta_t_k\nB1-I1-C01/7,hot connector or junction box,29.6\n" });
    expect(ok.status).toBe(200);
    expect(ok.json()).toMatchObject({ imported: 1, crossReference: { explained: 1, needsFlight: 1 } });
    const after = (await http(`/api/v1/sites/${p.siteId}/fly-list`, { headers: auth })).json<{ blocks: { block: string }[] }>();
    expect(after.blocks.map((x) => x.block)).toEqual(["B2"]);

    const otherToken = await token(other.org.id, ["admin"]);
    const cross = { authorization: `Bearer ${otherToken}`, "content-type": "text/csv" };
    expect((await http(`/api/v1/sites/${p.siteId}/fly-list`, { headers: cross })).status).toBe(404);
    expect((await http(`/api/v1/sites/${p.siteId}/findings?flightId=${flight.id}`, { method: "POST", headers: cross, body: "string,class\nB1-I1-C01/7,soiling\n" })).status).toBe(404);
    // their own site, but our flight: 404 as well
    expect((await http(`/api/v1/sites/${other.siteId}/findings?flightId=${flight.id}`, { method: "POST", headers: cross, body: "string,class\nB1-I1-C01/7,soiling\n" })).status).toBe(404);
    expect((await http(`/api/v1/sites/${p.siteId}/fly-list`)).status).toBe(401);
    const readOnly = await token(p.org.id, ["read"]);
    expect((await http(`/api/v1/sites/${p.siteId}/findings?flightId=${flight.id}`, { method: "POST", headers: { authorization: `Bearer ${readOnly}` }, body: "x" })).status).toBe(403);
  });
});

describe("settings", () => {
  it("an admin changes a class's expected effect and the cross-reference follows", async () => {
    const p = await plantWithFlag("FindRules");
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    const { cookie } = await signIn(p.people.admin.email, p.password);
    const r = await http("/settings/inspection", { cookie, form: { intent: "rule", classKey: "cell_hot_spot", severity: "high", effectUnit: "string", effectAmount: "0.8" } });
    expect(r.status).toBe(200);
    const bad = await http("/settings/inspection", { cookie, form: { intent: "rule", classKey: "cell_hot_spot", severity: "high", effectUnit: "string", effectAmount: "-1" } });
    expect(bad.status).toBe(400);
    const { cookie: pilot } = await signIn(p.people.pilot.email, p.password);
    await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie: pilot, form: { intent: "add", string: "B1-I1-C01/2", class: "cell hot spot", deltaTK: "12" } });
    const f = await flagState(p.flag.id);
    expect(f.explainedFraction).toBeCloseTo(0.8, 9);
    expect(f.state).toBe("explained");
    const cam = await http("/settings/inspection", { cookie, form: { intent: "camera", name: "R640", widthPx: "640", heightPx: "512", pixelPitchUm: "17", focalLengthsMm: "13, 19" } });
    expect(cam.status).toBe(200);
    const page = await http("/settings/inspection", { cookie });
    expect(page.body).toContain("5.23 cm"); // 40 m × 17 µm ÷ 13 mm
  });
});
