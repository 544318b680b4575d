import { and, eq, gt, sql, count } from "drizzle-orm";
import { db } from "~/db/client.server";
import { memberships, signInFailures, users } from "~/db/schema";
import { clientAddress, createSession } from "./session.server";
import { hashPassword, verifyPassword } from "./password.server";

export const RATE_LIMIT = { perAccount: 5, perAddress: 20, windowMinutes: 15 };
const WRONG = "That e-mail and password do not match an active account.";

// Compared against when the e-mail is unknown, so both paths take the same time.
let dummyHash: Promise<string> | undefined;

export async function signIn(
  request: Request,
  emailRaw: string,
  password: string,
): Promise<{ ok: true; cookie: string } | { ok: false; status: number; message: string }> {
  const email = emailRaw.trim().toLowerCase();
  const ip = clientAddress(request);
  const since = sql`now() - make_interval(mins => ${RATE_LIMIT.windowMinutes})`;
  const [byAccount] = await db().select({ n: count() }).from(signInFailures).where(and(eq(signInFailures.email, email), gt(signInFailures.at, since)));
  const [byAddress] = await db().select({ n: count() }).from(signInFailures).where(and(eq(signInFailures.ip, ip), gt(signInFailures.at, since)));
  if ((byAccount?.n ?? 0) >= RATE_LIMIT.perAccount || (byAddress?.n ?? 0) >= RATE_LIMIT.perAddress) {
    return { ok: false, status: 429, message: `Too many failed attempts. Wait ${RATE_LIMIT.windowMinutes} minutes, or reset your password.` };
  }
  const [user] = await db().select().from(users).where(sql`lower(${users.email}) = ${email}`).limit(1);
  const valid = user ? await verifyPassword(password, user.passwordHash) : await verifyPassword(password, await (dummyHash ??= hashPassword("x")));
  const [membership] = user
    ? await db().select().from(memberships).where(and(eq(memberships.userId, user.id), eq(memberships.active, true))).limit(1)
    : [];
  if (!user || !valid || !membership) {
    await db().insert(signInFailures).values({ email, ip });
    return { ok: false, status: 401, message: WRONG };
  }
  await db().delete(signInFailures).where(eq(signInFailures.email, email));
  return { ok: true, cookie: await createSession(request, user.id, membership.orgId) };
}
