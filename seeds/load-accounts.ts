import { and, eq, inArray, notExists, sql } from "drizzle-orm";
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

type Db = NodePgDatabase<typeof schema>;

/** The demo organisation: the one marked `is_demo` (its name proves nothing), if there is one. */
export async function demoOrgId(db: Db): Promise<string | null> {
  const [org] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.isDemo, true)).limit(1);
  return org?.id ?? null;
}

/** The demo organisation's members with a demo e-mail, by e-mail. */
async function demoMembers(db: Db, orgId: string): Promise<Record<string, string>> {
  const rows = await db
    .select({ id: schema.users.id, email: schema.users.email })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(eq(schema.memberships.orgId, orgId));
  const demo = new Set(DEMO_USERS.map((u) => u.email));
  return Object.fromEntries(rows.filter((r) => demo.has(r.email.toLowerCase())).map((r) => [r.email.toLowerCase(), r.id]));
}

/**
 * The demo organisation, one person per role and the demo API token, created together in one
 * transaction the first time. Once the demo organisation exists it is left as it is: accounts or a
 * token deleted since stay deleted (`--reset` rebuilds them), and `created` is false.
 */
export async function seedAccounts(db: Db): Promise<{ orgId: string; userIds: Record<string, string>; created: boolean }> {
  const existing = await demoOrgId(db);
  if (existing) return { orgId: existing, userIds: await demoMembers(db, existing), created: false };
  const hash = await hashPassword(DEMO_PASSWORD);
  return db.transaction(async (tx) => {
    // The unique index on the mark: a seed running at the same time makes this one fail, not a second demo.
    const [org] = await tx.insert(schema.organisations).values({ name: DEMO_ORG, isDemo: true }).returning();
    const orgId = org!.id;
    const userIds: Record<string, string> = {};
    for (const u of DEMO_USERS) {
      let [row] = await tx.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${u.email}`).limit(1);
      if (!row) [row] = await tx.insert(schema.users).values({ email: u.email, name: u.name, passwordHash: hash }).returning();
      userIds[u.email] = row!.id;
      await tx.insert(schema.memberships).values({ orgId, userId: row!.id, roles: u.roles, active: true }).onConflictDoNothing();
    }
    await tx
      .insert(schema.apiTokens)
      .values({ orgId, name: "Demo token (admin)", tokenHash: sha256(DEMO_TOKEN), prefix: DEMO_TOKEN.slice(0, 7), scopes: ["admin"] })
      .onConflictDoNothing();
    return { orgId, userIds, created: true };
  });
}

/**
 * Removes the demo: the marked organisation (with everything of it, by the foreign keys' cascade)
 * and then those of its members, and of the demo e-mails, who belong to no organisation any more.
 * Every other organisation and user is left as it is. Answers how many of each went.
 */
export async function removeDemo(db: Db): Promise<{ organisations: number; users: number }> {
  return db.transaction(async (tx) => {
    const orgs = await tx.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.isDemo, true));
    const orgIds = orgs.map((o) => o.id);
    const members = orgIds.length
      ? await tx.select({ userId: schema.memberships.userId }).from(schema.memberships).where(inArray(schema.memberships.orgId, orgIds))
      : [];
    const demoEmails = await tx
      .select({ id: schema.users.id })
      .from(schema.users)
      .where(inArray(sql`lower(${schema.users.email})`, DEMO_USERS.map((u) => u.email)));
    const candidates = [...new Set([...members.map((m) => m.userId), ...demoEmails.map((u) => u.id)])];
    if (orgIds.length) await tx.delete(schema.organisations).where(inArray(schema.organisations.id, orgIds));
    const gone = candidates.length
      ? await tx
          .delete(schema.users)
          .where(
            and(
              inArray(schema.users.id, candidates),
              notExists(tx.select({ one: sql`1` }).from(schema.memberships).where(eq(schema.memberships.userId, schema.users.id))),
            ),
          )
          .returning({ id: schema.users.id })
      : [];
    return { organisations: orgIds.length, users: gone.length };
  });
}
