/** A small plant inserted directly: one block, one inverter, two 12-string combiners with positions, and one flag. */
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { createOrg, db } from "../helpers/db";

export async function plantWithFlag(label = "Flights", flag: Partial<typeof schema.flags.$inferInsert> = {}) {
  const org = await createOrg(label);
  const siteId = org.site.id;
  const [b1] = await db.insert(schema.blocks).values({ siteId, name: "B1" }).returning();
  const [b2] = await db.insert(schema.blocks).values({ siteId, name: "B2" }).returning();
  const [inv] = await db.insert(schema.devices).values({ siteId, kind: "inverter", name: "B1-I1", blockId: b1!.id }).returning();
  const [inv2] = await db.insert(schema.devices).values({ siteId, kind: "inverter", name: "B2-I1", blockId: b2!.id }).returning();
  const [c1] = await db.insert(schema.devices).values({ siteId, kind: "combiner", name: "B1-I1-C01", blockId: b1!.id, parentId: inv!.id, stringCount: 12 }).returning();
  const [c2] = await db.insert(schema.devices).values({ siteId, kind: "combiner", name: "B1-I1-C02", blockId: b1!.id, parentId: inv!.id, stringCount: 12 }).returning();
  const [c3] = await db.insert(schema.devices).values({ siteId, kind: "combiner", name: "B2-I1-C01", blockId: b2!.id, parentId: inv2!.id, stringCount: 12 }).returning();
  const rows = [c1!, c2!, c3!].flatMap((c, k) => Array.from({ length: 12 }, (_, i) => ({ combinerId: c.id, number: i + 1, modules: 28, x: 10 + k * 100, y: 10 + i * 10 })));
  await db.insert(schema.strings).values(rows);
  const today = new Date().toISOString().slice(0, 10);
  const [f] = await db
    .insert(schema.flags)
    .values({ siteId, combinerId: c1!.id, state: "new", firstDay: today, lastDay: today, stringsOut: 1, confidence: 0.9, lostKwhPerDay: 60, lostKwhToDate: 300, ...flag })
    .returning();
  const [f3] = await db
    .insert(schema.flags)
    .values({ siteId, combinerId: c3!.id, state: "new", firstDay: today, lastDay: today, stringsOut: 2, confidence: 0.9, lostKwhPerDay: 130, lostKwhToDate: 500 })
    .returning();
  return { ...org, siteId, blocks: [b1!, b2!], combiners: [c1!, c2!, c3!], flag: f!, otherFlag: f3! };
}

export async function insertFlight(siteId: string, blockIds: number[]) {
  const [f] = await db.insert(schema.flights).values({ siteId, startedAt: new Date(), blockIds, pilotName: "Test pilot", aircraft: "quadcopter", poaWm2: 800, windKmh: 10, cloudOkta: 1 }).returning();
  return f!;
}

export async function flagState(id: string) {
  const [f] = await db.select().from(schema.flags).where(eq(schema.flags.id, id));
  return f!;
}

export async function findingCount(siteId: string): Promise<number> {
  return (await db.select().from(schema.findings).where(eq(schema.findings.siteId, siteId))).length;
}

/** A flight over the plant's first block with one finding (a bypass-diode substring) on its first combiner's first string. */
export async function findingOf(plant: Awaited<ReturnType<typeof plantWithFlag>>) {
  const flight = await insertFlight(plant.siteId, [plant.blocks[0]!.id]);
  const [str] = await db.select().from(schema.strings).where(eq(schema.strings.combinerId, plant.combiners[0]!.id)).limit(1);
  const [f] = await db
    .insert(schema.findings)
    .values({ flightId: flight.id, siteId: plant.siteId, stringId: str!.id, combinerId: plant.combiners[0]!.id, stringNumber: str!.number, classKey: "bypass_diode_substring", source: "manual" })
    .returning();
  return { flight, finding: f! };
}
