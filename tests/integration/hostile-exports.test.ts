/**
 * Formula injection in every CSV export: names, notes and reasons that start with = + - @ come
 * out with a leading apostrophe (OWASP "CSV Injection", from memory), numbers stay numbers.
 * The reject report of an import is covered in import-readings.test.ts ("non-numeric values").
 */
import { describe, expect, it } from "vitest";
import Papa from "papaparse";
import * as schema from "../../app/db/schema";
import { createOrg, db } from "../helpers/db";
import { http, signIn } from "../helpers/http";

const HOSTILE = ['=HYPERLINK("http://evil.test","open")', "+cmd|' /C calc'!A0", "-2+3+cmd|' /C calc'!A0", "@SUM(1+1)*cmd|' /C calc'!A0"];

/** Cells of a CSV body, parsed as a spreadsheet would read the text. */
function cells(body: string): string[][] {
  return Papa.parse<string[]>(body.trim(), { delimiter: "," }).data;
}

async function plantWithHostileNames() {
  const org = await createOrg("Exports");
  const siteId = org.site.id;
  const [b] = await db.insert(schema.blocks).values({ siteId, name: "B1" }).returning();
  const [inv] = await db.insert(schema.devices).values({ siteId, kind: "inverter", name: "B1-I1", blockId: b!.id }).returning();
  const combiners = [];
  for (const name of HOSTILE) {
    const [c] = await db.insert(schema.devices).values({ siteId, kind: "combiner", name, blockId: b!.id, parentId: inv!.id, stringCount: 12 }).returning();
    combiners.push(c!);
  }
  return { ...org, siteId, combiners };
}

describe("CSV exports neutralise formula cells", () => {
  it("flags CSV: combiner names and reasons starting with = + - @", async () => {
    const p = await plantWithHostileNames();
    for (const [i, c] of p.combiners.entries())
      await db.insert(schema.flags).values({ siteId: p.siteId, combinerId: c.id, state: "new", firstDay: "2026-06-01", lastDay: "2026-06-05", stringsOut: 1, confidence: 0.9, lostKwhPerDay: -0 + 10 + i, lostKwhToDate: 50, stateReason: HOSTILE[(i + 1) % 4]! });
    const { cookie } = await signIn(p.people.engineer.email, p.password);
    const res = await http(`/sites/${p.siteId}/flags.csv?state=all`, { cookie });
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    const rows = cells(res.body);
    expect(rows[0]![0]).toBe("combiner");
    const names = rows.slice(1).map((r) => r[0]).sort();
    expect(names).toEqual(HOSTILE.map((h) => `'${h}`).sort());
    const reasons = rows.slice(1).map((r) => r[11]).sort();
    expect(reasons).toEqual(HOSTILE.map((h) => `'${h}`).sort());
    // No cell of the file starts like a formula.
    for (const r of rows) for (const cell of r) expect(cell).not.toMatch(/^[=+@]|^-(?!\d)/);
  });

  it("recovery CSV: work-order title, combiner, what was found and the message", async () => {
    const p = await plantWithHostileNames();
    for (const [i, c] of p.combiners.entries()) {
      const [wo] = await db
        .insert(schema.workOrders)
        .values({ orgId: p.org.id, siteId: p.siteId, number: 9000 + i, combinerId: c.id, title: HOSTILE[i]!, whatToCheck: "check", state: "done", resolution: HOSTILE[(i + 1) % 4]! } as typeof schema.workOrders.$inferInsert)
        .returning();
      await db.insert(schema.recoveries).values({ workOrderId: wo!.id, siteId: p.siteId, combinerId: c.id, repairedOn: "2026-06-10", windowDays: 7, status: "verifying", message: HOSTILE[(i + 2) % 4]!, beforeOi: 0.9, afterOi: 1, kwhPerDay: -1.5 });
    }
    const { cookie } = await signIn(p.people.owner.email, p.password);
    const res = await http(`/sites/${p.siteId}/recovery.csv`, { cookie });
    expect(res.status).toBe(200);
    const rows = cells(res.body);
    const head = rows[0]!;
    const col = (n: string) => head.indexOf(n);
    const body = rows.slice(1);
    expect(body).toHaveLength(4);
    for (const name of ["title", "combiner", "found", "message"]) expect(body.map((r) => r[col(name)]).sort()).toEqual(HOSTILE.map((h) => `'${h}`).sort());
    // A negative number is data, written as a number.
    expect(body.map((r) => r[col("kwh_per_day")])).toEqual(["-1.50", "-1.50", "-1.50", "-1.50"]);
  });
});
