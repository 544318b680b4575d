/**
 * A layout re-import that leaves out strings carrying drone findings (deleted with their string)
 * or named by open work orders is refused, naming them, and changes nothing, unless the engineer
 * confirms (a checkbox on the screen, `confirm=drop-findings` on the API).
 */
import { describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { createToken } from "../../app/models/tokens.server";
import { db } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import { siteWithLayout, tableChecksums, type Org } from "../helpers/imports";

// The test layout less B1-I1-C01 string 2 and B1-I1-C02 string 2.
const SHRUNK = `block,inverter,combiner,string,modules
B1,B1-I1,B1-I1-C01,1,28
B1,B1-I1,B1-I1-C02,1,28
`;

/** A finding on B1-I1-C01 string 2 (flight of 12 May 2026) and an open work order on B1-I1-C02 string 2. */
async function withFindings(label: string) {
  const org = await siteWithLayout(label);
  const devs = await db.select().from(schema.devices).where(eq(schema.devices.siteId, org.site.id));
  const c01 = devs.find((d) => d.name === "B1-I1-C01")!;
  const c02 = devs.find((d) => d.name === "B1-I1-C02")!;
  const [s2] = await db.select().from(schema.strings).where(and(eq(schema.strings.combinerId, c01.id), eq(schema.strings.number, 2)));
  const [flight] = await db
    .insert(schema.flights)
    .values({ siteId: org.site.id, startedAt: new Date("2026-05-12T09:30:00Z"), blockIds: [c01.blockId!], pilotName: "Test pilot", aircraft: "quadcopter" })
    .returning();
  const [finding] = await db
    .insert(schema.findings)
    .values({ flightId: flight!.id, siteId: org.site.id, stringId: s2!.id, combinerId: c01.id, stringNumber: 2, classKey: "cell_hot_spot", source: "manual" })
    .returning();
  const [wo] = await db
    .insert(schema.workOrders)
    .values({ orgId: org.org.id, siteId: org.site.id, number: 7, combinerId: c02.id, stringNumbers: [2], title: "Check string 2", whatToCheck: "Fuse of string 2" })
    .returning();
  return { org, findingId: finding!.id, workOrderId: wo!.id };
}

const MESSAGE =
  "1 drone finding is on strings this layout removes: B1-I1-C01 string 2 (flight 12 May 2026). 1 open work order names strings this layout removes: #7 (B1-I1-C02 string 2); it is kept. Confirm to delete them, or keep those strings.";

async function stringsOf(org: Org) {
  const rows = await db.select({ name: schema.devices.name, n: schema.strings.number }).from(schema.strings).innerJoin(schema.devices, eq(schema.devices.id, schema.strings.combinerId)).where(eq(schema.devices.siteId, org.site.id));
  return rows.map((r) => `${r.name}/${r.n}`).sort();
}

describe("layout re-import that removes strings with findings", () => {
  it("attack: the layout screen refuses a re-import that would silently delete drone findings; nothing changes until the engineer confirms", async () => {
    const { org, findingId, workOrderId } = await withFindings("DropScreen");
    const { cookie } = await signIn(org.people.engineer.email, org.password);
    const path = `/sites/${org.site.id}/layout`;
    // The check already says what would go.
    const form = new FormData();
    form.set("intent", "preview");
    form.set("file", new File([SHRUNK], "shrunk.csv", { type: "text/csv" }));
    const preview = await http(path, { method: "POST", cookie, body: form });
    expect(preview.status).toBe(200);
    expect(preview.body).toContain(MESSAGE);
    const before = await tableChecksums();
    const refused = await http(path, { cookie, form: { intent: "commit", text: SHRUNK } });
    expect(refused.status).toBe(409);
    expect(refused.body).toContain(`The layout was not imported. ${MESSAGE} Nothing was changed.`);
    expect(await tableChecksums()).toEqual(before);
    expect(await db.select().from(schema.findings).where(eq(schema.findings.id, findingId))).toHaveLength(1);
    // A wrong confirmation word is no confirmation.
    expect((await http(path, { cookie, form: { intent: "commit", text: SHRUNK, confirm: "yes" } })).status).toBe(409);
    expect(await tableChecksums()).toEqual(before);
    // Confirmed: the strings and the finding go; the work order stays.
    const done = await http(path, { cookie, form: { intent: "commit", text: SHRUNK, confirm: "drop-findings" } });
    expect(done.status).toBe(200);
    expect(await stringsOf(org)).toEqual(["B1-I1-C01/1", "B1-I1-C02/1"]);
    expect(await db.select().from(schema.findings).where(eq(schema.findings.id, findingId))).toHaveLength(0);
    expect(await db.select().from(schema.workOrders).where(eq(schema.workOrders.id, workOrderId))).toHaveLength(1);
  });

  it("attack: the layout API refuses (409) a re-import that would silently delete drone findings; confirm=drop-findings goes ahead", async () => {
    const { org, findingId } = await withFindings("DropApi");
    const token = await createToken({ orgId: org.org.id, userId: org.people.admin.id, sessionId: "", email: "", name: "", roles: ["admin"] }, "test", ["write"]);
    const send = (q = "") => http(`/api/v1/sites/${org.site.id}/layout${q}`, { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "text/csv" }, body: SHRUNK });
    const before = await tableChecksums();
    const refused = await send();
    expect(refused.status).toBe(409);
    expect(refused.json()).toEqual({
      error: `The layout was not imported; nothing changed. ${MESSAGE} To go ahead, send it again with ?confirm=drop-findings.`,
      findings: 1,
      workOrders: 1,
    });
    expect(await tableChecksums()).toEqual(before);
    expect(await stringsOf(org)).toEqual(["B1-I1-C01/1", "B1-I1-C01/2", "B1-I1-C02/1", "B1-I1-C02/2"]);
    const done = await send("?confirm=drop-findings");
    expect(done.status).toBe(200);
    expect(done.json()).toMatchObject({ combiners: 2, strings: 2 });
    expect(await db.select().from(schema.findings).where(eq(schema.findings.id, findingId))).toHaveLength(0);
    // A re-import that removes nothing with findings needs no confirmation.
    expect((await send()).status).toBe(200);
  });
});
