import { and, asc, eq, ne, sql, isNull, desc } from "drizzle-orm";
import { db } from "~/db/client.server";
import { invitations, memberships, organisations, sessions, users } from "~/db/schema";
import type { Principal } from "~/services/session.server";
import { forbidden, notFound } from "~/services/session.server";
import { audit } from "~/services/audit.server";
import type { Role } from "~/permissions";

export async function listMembers(principal: Principal) {
  return db()
    .select({ userId: users.id, name: users.name, email: users.email, roles: memberships.roles, active: memberships.active })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.orgId, principal.orgId))
    .orderBy(asc(users.name));
}

export async function listPendingInvitations(principal: Principal) {
  return db()
    .select({ id: invitations.id, email: invitations.email, name: invitations.name, roles: invitations.roles, expiresAt: invitations.expiresAt })
    .from(invitations)
    .where(and(eq(invitations.orgId, principal.orgId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), sql`${invitations.expiresAt} > now()`))
    .orderBy(desc(invitations.createdAt));
}

export async function orgName(orgId: string): Promise<string> {
  const [o] = await db().select({ name: organisations.name }).from(organisations).where(eq(organisations.id, orgId));
  return o?.name ?? "your organisation";
}

async function memberOf(principal: Principal, userId: string) {
  const [m] = await db().select().from(memberships).where(and(eq(memberships.orgId, principal.orgId), eq(memberships.userId, userId))).limit(1);
  if (!m) notFound("No such user");
  return m;
}

async function remainingActiveAdmins(orgId: string, exceptUserId: string): Promise<number> {
  const [r] = await db()
    .select({ n: sql<number>`count(*)::int` })
    .from(memberships)
    .where(and(eq(memberships.orgId, orgId), eq(memberships.active, true), ne(memberships.userId, exceptUserId), sql`'admin' = any(${memberships.roles})`));
  return r?.n ?? 0;
}

export async function setRoles(principal: Principal, userId: string, roles: Role[]) {
  const m = await memberOf(principal, userId);
  if (m.roles.includes("admin") && !roles.includes("admin") && (await remainingActiveAdmins(principal.orgId, userId)) === 0)
    forbidden("The organisation must keep at least one active admin.");
  await db().update(memberships).set({ roles }).where(and(eq(memberships.orgId, principal.orgId), eq(memberships.userId, userId)));
  await audit({ orgId: principal.orgId, userId: principal.userId, action: "user.roles", entity: "user", entityId: userId, detail: { from: m.roles, to: roles } });
}

/** Deactivation revokes every session of that person in this organisation at once. */
export async function setActive(principal: Principal, userId: string, active: boolean) {
  const m = await memberOf(principal, userId);
  if (!active && userId === principal.userId) forbidden("You cannot deactivate yourself.");
  if (!active && m.roles.includes("admin") && (await remainingActiveAdmins(principal.orgId, userId)) === 0)
    forbidden("The organisation must keep at least one active admin.");
  await db().transaction(async (tx) => {
    await tx.update(memberships).set({ active }).where(and(eq(memberships.orgId, principal.orgId), eq(memberships.userId, userId)));
    if (!active)
      await tx.update(sessions).set({ revokedAt: new Date() }).where(and(eq(sessions.userId, userId), eq(sessions.orgId, principal.orgId), isNull(sessions.revokedAt)));
  });
  await audit({ orgId: principal.orgId, userId: principal.userId, action: active ? "user.reactivate" : "user.deactivate", entity: "user", entityId: userId });
}

export async function revokeInvitation(principal: Principal, id: string) {
  await db().update(invitations).set({ revokedAt: new Date() }).where(and(eq(invitations.id, id), eq(invitations.orgId, principal.orgId)));
}
