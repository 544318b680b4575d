import { and, eq, gt, isNull, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { invitations, memberships, passwordResets, users } from "~/db/schema";
import { env } from "~/env.server";
import { hashPassword, newToken, sha256 } from "./password.server";
import { claimAttempt, type AttemptLimit } from "./attempt-limits.server";
import { clientAddress } from "./forwarded.server";
import { revokeAllSessions } from "./session.server";
import { enqueue } from "~/jobs/queue.server";
import { sendEmail } from "./mail.server";
import { ROLE_LABELS, type Role } from "~/permissions";

export const RESET_TTL_MIN = 30;
export const INVITE_TTL_DAYS = 7;

/** Password-reset requests: 5 per e-mail and 20 per address in 15 minutes; more are dropped, unannounced. */
export const RESET_LIMIT: AttemptLimit = { table: "password_reset_requests", perAccount: 5, perAddress: 20, windowMinutes: 15 };
export const RESET_MAIL_JOB = "password-reset-mail";

/**
 * Always answers the same, whether or not the address has an account, and in the same time: the
 * request is counted against its limits and handed to the job queue; the worker looks the person
 * up and sends the mail (sendPasswordResetMail).
 */
export async function requestPasswordReset(request: Request, emailRaw: string): Promise<void> {
  const email = emailRaw.trim().toLowerCase();
  if ((await claimAttempt(RESET_LIMIT, email, clientAddress(request))) === null) return;
  await enqueue(RESET_MAIL_JOB, { email }, { retryLimit: 0 });
}

/** The job: a reset link for an account with an active membership; nothing for anyone else. */
export async function sendPasswordResetMail(data: unknown): Promise<void> {
  const email = typeof (data as { email?: unknown })?.email === "string" ? (data as { email: string }).email : null;
  if (!email) return;
  const [user] = await db().select().from(users).where(sql`lower(${users.email}) = ${email}`).limit(1);
  if (!user) return;
  const [m] = await db().select().from(memberships).where(and(eq(memberships.userId, user.id), eq(memberships.active, true))).limit(1);
  if (!m) return;
  const token = newToken();
  await db().insert(passwordResets).values({ userId: user.id, tokenHash: sha256(token), expiresAt: new Date(Date.now() + RESET_TTL_MIN * 60_000) });
  await sendEmail({
    // A person's own account, not an organisation's business: filed under no organisation's outbox.
    orgId: null,
    kind: "password-reset",
    to: user.email,
    subject: "Reset your Sunsift password",
    text: `Hello ${user.name},\n\nSomeone (we hope you) asked to reset the password of your Sunsift account.\nOpen this link within ${RESET_TTL_MIN} minutes to choose a new one:\n\n${env().APP_URL}/reset-password/${token}\n\nIf it was not you, ignore this message: your password stays as it is.\n`,
  });
}

export async function findValidReset(token: string) {
  const [row] = await db()
    .select()
    .from(passwordResets)
    .where(and(eq(passwordResets.tokenHash, sha256(token)), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, sql`now()`)))
    .limit(1);
  return row ?? null;
}

/** Single use: the token is spent in the same statement that checks it. */
export async function completePasswordReset(token: string, password: string): Promise<boolean> {
  const hash = await hashPassword(password);
  return db().transaction(async (tx) => {
    const [row] = await tx
      .update(passwordResets)
      .set({ usedAt: new Date() })
      .where(and(eq(passwordResets.tokenHash, sha256(token)), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, sql`now()`)))
      .returning();
    if (!row) return false;
    await tx.update(users).set({ passwordHash: hash }).where(eq(users.id, row.userId));
    // Whoever held a session of this person (in any organisation) signs in again, with the new password.
    await revokeAllSessions(row.userId, tx);
    return true;
  });
}

export async function createInvitation(p: { orgId: string; invitedBy: string; email: string; name: string; roles: Role[]; orgName: string }) {
  const token = newToken();
  const [inv] = await db()
    .insert(invitations)
    .values({
      orgId: p.orgId,
      email: p.email.trim().toLowerCase(),
      name: p.name,
      roles: p.roles,
      tokenHash: sha256(token),
      invitedBy: p.invitedBy,
      expiresAt: new Date(Date.now() + INVITE_TTL_DAYS * 86_400_000),
    })
    .returning();
  const mail = await sendEmail({
    orgId: p.orgId,
    kind: "invitation",
    to: p.email,
    subject: `You are invited to ${p.orgName} on Sunsift`,
    text: `Hello ${p.name},\n\nYou have been invited to ${p.orgName} on Sunsift as ${p.roles.map((r) => ROLE_LABELS[r]).join(", ")}.\nOpen this link within ${INVITE_TTL_DAYS} days to choose your password:\n\n${env().APP_URL}/invite/${token}\n`,
  });
  return { invitation: inv!, token, delivered: mail.delivered, error: mail.error };
}

export async function findValidInvitation(token: string) {
  const [row] = await db()
    .select()
    .from(invitations)
    .where(and(eq(invitations.tokenHash, sha256(token)), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, sql`now()`)))
    .limit(1);
  return row ?? null;
}

/** The account an invitation is addressed to, if that address already has one. */
export async function accountFor(email: string) {
  const [u] = await db().select({ id: users.id, email: users.email, name: users.name }).from(users).where(sql`lower(${users.email}) = ${email.trim().toLowerCase()}`).limit(1);
  return u ?? null;
}

export type Joiner =
  /** No account has the invitation's address: one is made with this password. */
  | { kind: "new"; password: string }
  /** The account that has the address, whose holder proved it (signed in, or their current password). */
  | { kind: "existing"; userId: string };

/**
 * Spends the invitation and adds the membership. An existing account is never changed (its
 * password least of all): its holder joins by proving who they are. Answers null when the
 * invitation is no longer valid, "exists" when a new account was asked for but the address has
 * one (nothing is spent then).
 */
export async function acceptInvitation(token: string, joiner: Joiner): Promise<{ userId: string; orgId: string } | "exists" | null> {
  const hash = joiner.kind === "new" ? await hashPassword(joiner.password) : null;
  /** Undoes the spent invitation: the transaction ends with this answer. */
  class Refused extends Error {
    constructor(readonly answer: "exists" | null) {
      super("invitation refused");
    }
  }
  return db().transaction(async (tx) => {
    const [inv] = await tx
      .update(invitations)
      .set({ acceptedAt: new Date() })
      .where(and(eq(invitations.tokenHash, sha256(token)), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, sql`now()`)))
      .returning();
    if (!inv) return null;
    const [existing] = await tx.select().from(users).where(sql`lower(${users.email}) = ${inv.email}`).limit(1);
    let userId: string;
    if (joiner.kind === "existing") {
      if (!existing || existing.id !== joiner.userId) throw new Refused(null);
      userId = existing.id;
    } else {
      if (existing) throw new Refused("exists");
      const [u] = await tx.insert(users).values({ email: inv.email, name: inv.name, passwordHash: hash }).onConflictDoNothing().returning();
      if (!u) throw new Refused("exists");
      userId = u.id;
    }
    await tx
      .insert(memberships)
      .values({ orgId: inv.orgId, userId, roles: inv.roles, active: true })
      .onConflictDoUpdate({ target: [memberships.orgId, memberships.userId], set: { roles: inv.roles, active: true } });
    return { userId, orgId: inv.orgId };
  }).catch((e: unknown) => {
    if (e instanceof Refused) return e.answer;
    throw e;
  });
}
