import { eq, sql } from "drizzle-orm";
import type { NodePgDatabase } from "drizzle-orm/node-postgres";
import * as schema from "../app/db/schema";
import { hashPassword, sha256 } from "../app/services/password.server";
import type { Role } from "../app/permissions";

export const DEMO_PASSWORD = "sunsift-demo";
export const DEMO_TOKEN = "sunsift-demo-token";
export const DEMO_ORG = "Demo Solar Operations";

export const DEMO_USERS: { email: string; name: string; roles: Role[] }[] = [
  { email: "admin@sunsift.test", name: "Alex Admin", roles: ["admin"] },
  { email: "engineer@sunsift.test", name: "Erin Engineer", roles: ["engineer"] },
  { email: "lead@sunsift.test", name: "Lee Lead", roles: ["lead"] },
  { email: "pilot@sunsift.test", name: "Pat Pilot", roles: ["pilot"] },
  { email: "tech@sunsift.test", name: "Toni Technician", roles: ["technician"] },
  { email: "owner@sunsift.test", name: "Olu Owner", roles: ["owner"] },
];

/** The demo organisation, one person per role and the demo API token. Idempotent. */
export async function seedAccounts(db: NodePgDatabase<typeof schema>): Promise<{ orgId: string; userIds: Record<string, string> }> {
  let [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.name, DEMO_ORG)).limit(1);
  if (!org) [org] = await db.insert(schema.organisations).values({ name: DEMO_ORG }).returning();
  const orgId = org!.id;
  const hash = await hashPassword(DEMO_PASSWORD);
  const userIds: Record<string, string> = {};
  for (const u of DEMO_USERS) {
    let [row] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${u.email}`).limit(1);
    if (!row) [row] = await db.insert(schema.users).values({ email: u.email, name: u.name, passwordHash: hash }).returning();
    userIds[u.email] = row!.id;
    await db
      .insert(schema.memberships)
      .values({ orgId, userId: row!.id, roles: u.roles, active: true })
      .onConflictDoNothing();
  }
  await db
    .insert(schema.apiTokens)
    .values({ orgId, name: "Demo token (admin)", tokenHash: sha256(DEMO_TOKEN), prefix: DEMO_TOKEN.slice(0, 7), scopes: ["admin"] })
    .onConflictDoNothing();
  return { orgId, userIds };
}
