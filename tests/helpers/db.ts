import { drizzle } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "../../app/db/schema";
import { hashPassword } from "../../app/services/password.server";
import type { Role } from "../../app/permissions";
import type { SiteSettingsInput } from "../../app/domain/site-settings";
import { siteSettingsSchema } from "../../app/domain/site-settings";
import { randomUUID } from "node:crypto";

export const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 4 });
export const db = drizzle(pool, { schema });

export const SAMPLE_SETTINGS: SiteSettingsInput = {
  name: "Test site",
  latitude: 37.2,
  longitude: -5.9,
  elevation: 60,
  timezone: "Europe/Madrid",
  dcCapacityKw: 5000,
  acCapacityKw: 4000,
  currency: "EUR",
  tariffPerMwh: 55,
  mounting: { kind: "tracker", axisAzimuth: 180, maxAngle: 55, gcr: 0.35 },
  module: { pmp: 550, vmp: 41.9, imp: 13.13, voc: 49.6, isc: 13.98, alphaIsc: 0.048, betaVoc: -0.27, gammaPmp: -0.35 },
  temperatureSource: { kind: "sandia", moduleType: "glass_polymer_open_rack" },
  dataConvention: "start",
  metStations: ["MET1"],
};

let hashed: Promise<string> | undefined;

/** A whole organisation of its own: one person per role, one site (owners get access to it). */
export async function createOrg(label = "Org") {
  const tag = randomUUID().slice(0, 8);
  const [org] = await db.insert(schema.organisations).values({ name: `${label} ${tag}` }).returning();
  const passwordHash = await (hashed ??= hashPassword("test-password-1"));
  const [site] = await db
    .insert(schema.sites)
    .values({ orgId: org!.id, name: `${label} site ${tag}`, latitude: 37.2, longitude: -5.9, timezone: "Europe/Madrid", settings: siteSettingsSchema.parse({ ...SAMPLE_SETTINGS, name: `${label} site ${tag}` }) })
    .returning();
  const people: Record<Role, { id: string; email: string }> = {} as never;
  for (const role of ["admin", "engineer", "lead", "pilot", "technician", "owner"] as Role[]) {
    const email = `${role}-${tag}@example.com`;
    const [u] = await db.insert(schema.users).values({ email, name: `${role} ${tag}`, passwordHash }).returning();
    await db.insert(schema.memberships).values({ orgId: org!.id, userId: u!.id, roles: [role] });
    people[role] = { id: u!.id, email };
  }
  await db.insert(schema.siteAccess).values({ userId: people.owner.id, siteId: site!.id });
  return { org: org!, site: site!, people, password: "test-password-1" };
}
