import { and, asc, eq, or, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { memberships, signInFailures, users, type User } from "~/db/schema";
import { clientAddress, createSession } from "./session.server";
import { hashPassword, needsRehash, verifyPassword } from "./password.server";
import { claimAttempt, type AttemptLimit } from "./attempt-limits.server";

export const RATE_LIMIT = { perAccount: 5, perAddress: 20, windowMinutes: 15 };
const LIMIT: AttemptLimit = { table: "sign_in_failures", ...RATE_LIMIT };
const WRONG = "That e-mail and password do not match an active account.";
export const TOO_MANY = `Too many failed attempts. Wait ${RATE_LIMIT.windowMinutes} minutes, or reset your password.`;

// Compared against when the e-mail is unknown, so both paths take the same time.
let dummyHash: Promise<string> | undefined;

/**
 * Checks an e-mail and password under the sign-in limits (5 failures per account, 20 per address,
 * in 15 minutes). Every attempt is first recorded as a failure, atomically with the count
 * (claimAttempt), and the record is removed when the password is right: a burst of concurrent
 * guesses cannot get more than the limit evaluated. A right password whose hash was made with
 * older parameters is hashed again.
 */
export async function checkPassword<T = true>(
  request: Request,
  emailRaw: string,
  password: string,
  /** A further condition on the person (an active membership); null counts as a failure. */
  also: (user: User) => Promise<T | null> = async () => true as T,
): Promise<{ ok: true; user: User; also: T } | { ok: false; status: number; message: string }> {
  const email = emailRaw.trim().toLowerCase();
  const attempt = await claimAttempt(LIMIT, email, clientAddress(request));
  if (attempt === null) return { ok: false, status: 429, message: TOO_MANY };
  const [user] = await db().select().from(users).where(sql`lower(${users.email}) = ${email}`).limit(1);
  const valid = user ? await verifyPassword(password, user.passwordHash) : await verifyPassword(password, await (dummyHash ??= hashPassword("x")));
  const extra = user && valid ? await also(user) : null;
  if (!user || !valid || extra === null) return { ok: false, status: 401, message: WRONG };
  // A right password: this attempt and the account's earlier failures no longer count.
  await db().delete(signInFailures).where(or(eq(signInFailures.id, attempt), eq(signInFailures.email, email)));
  if (needsRehash(user.passwordHash)) {
    const fresh = await hashPassword(password);
    // Only if nobody changed the password meanwhile.
    await db().update(users).set({ passwordHash: fresh }).where(and(eq(users.id, user.id), eq(users.passwordHash, user.passwordHash!)));
  }
  return { ok: true, user, also: extra };
}

/** The organisation a new session of this person starts in: the one they used last. */
export async function landingOrg(userId: string): Promise<string | null> {
  const [m] = await db()
    .select({ orgId: memberships.orgId })
    .from(memberships)
    .where(and(eq(memberships.userId, userId), eq(memberships.active, true)))
    .orderBy(sql`${memberships.lastUsedAt} desc nulls last`, asc(memberships.createdAt), asc(memberships.orgId))
    .limit(1);
  return m?.orgId ?? null;
}

export async function signIn(
  request: Request,
  emailRaw: string,
  password: string,
): Promise<{ ok: true; cookie: string } | { ok: false; status: number; message: string }> {
  const checked = await checkPassword(request, emailRaw, password, (user) => landingOrg(user.id));
  if (!checked.ok) return checked;
  return { ok: true, cookie: await createSession(request, checked.user.id, checked.also) };
}
