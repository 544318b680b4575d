import { sql } from "drizzle-orm";
import { db } from "~/db/client.server";

export interface AttemptLimit {
  /** The table that keeps the attempts: `sign_in_failures` or `password_reset_requests`. */
  table: "sign_in_failures" | "password_reset_requests";
  perAccount: number;
  perAddress: number;
  windowMinutes: number;
}

/** Advisory-lock key spaces (first key of pg_advisory_xact_lock(int, int)). */
const LOCK_SPACE = { sign_in_failures: [7101, 7102], password_reset_requests: [7103, 7104] } as const;

/**
 * Counts the e-mail's and the address's attempts within the window and, if both are under their
 * limits, records this one — in one transaction holding an advisory lock on the e-mail and one on
 * the address, so concurrent attempts queue here and exactly the allowed number get through.
 * Answers the new row's id (the caller deletes it when the attempt turns out fine), or null when
 * a limit is reached.
 */
export async function claimAttempt(limit: AttemptLimit, email: string, ip: string): Promise<number | null> {
  const [emailSpace, ipSpace] = LOCK_SPACE[limit.table];
  const table = sql.identifier(limit.table);
  return db().transaction(async (tx) => {
    // Always the e-mail's lock first, then the address's: two attempts never wait on each other in a circle.
    await tx.execute(sql`select pg_advisory_xact_lock(${emailSpace}::int, hashtext(${email}))`);
    await tx.execute(sql`select pg_advisory_xact_lock(${ipSpace}::int, hashtext(${ip}))`);
    const since = sql`now() - make_interval(mins => ${limit.windowMinutes})`;
    const res = await tx.execute<{ id: number }>(sql`
      insert into ${table} (email, ip)
      select ${email}, ${ip}
      where (select count(*) from ${table} where email = ${email} and at > ${since}) < ${limit.perAccount}
        and (select count(*) from ${table} where ip = ${ip} and at > ${since}) < ${limit.perAddress}
      returning id`);
    return res.rows[0]?.id ?? null;
  });
}
