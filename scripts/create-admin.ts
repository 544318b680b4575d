/**
 * The first organisation and its admin, for a real installation (there is no sign-up page):
 *
 *   DATABASE_URL=… APP_URL=https://… npm run create-admin -- --org "Our O&M company" --email a@b.c --name "A. Person"
 *
 * No password travels on the command line: the script prints a one-time link (valid 30 minutes,
 * the same as a password reset) where the admin chooses one. An address that already has an
 * account is refused — an existing person is invited from Settings → Users and joins with their own
 * password. Everyone else is invited from there too.
 */
import { parseArgs } from "node:util";
import { fileURLToPath } from "node:url";
import pg from "pg";
import { newToken, sha256 } from "../app/services/password.server";
import { RESET_TTL_MIN } from "../app/services/account-links.server";

export interface CreateAdminInput {
  org: string;
  email: string;
  name: string;
}

/** Creates the organisation, the person (no password yet) and an admin membership in one transaction. */
export async function createAdmin(databaseUrl: string, appUrl: string, input: CreateAdminInput): Promise<{ orgId: string; userId: string; link: string }> {
  const org = input.org.trim();
  const name = input.name.trim();
  const email = input.email.trim().toLowerCase();
  if (!org) throw new Error("Give the organisation's name with --org.");
  if (!name) throw new Error("Give the admin's name with --name.");
  if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email)) throw new Error(`"${input.email}" is not an e-mail address.`);
  const client = new pg.Client({ connectionString: databaseUrl });
  await client.connect();
  try {
    await client.query("begin");
    const taken = await client.query("select 1 from users where lower(email) = $1", [email]);
    if (taken.rowCount) throw new Error(`${email} already has a Sunsift account: invite that person from Settings → Users instead.`);
    const o = await client.query<{ id: string }>("insert into organisations (name) values ($1) returning id", [org]);
    const u = await client.query<{ id: string }>("insert into users (email, name) values ($1, $2) returning id", [email, name]);
    const orgId = o.rows[0]!.id;
    const userId = u.rows[0]!.id;
    await client.query("insert into memberships (org_id, user_id, roles, active) values ($1, $2, $3, true)", [orgId, userId, ["admin"]]);
    const token = newToken();
    await client.query("insert into password_resets (user_id, token_hash, expires_at) values ($1, $2, now() + make_interval(mins => $3))", [
      userId,
      sha256(token),
      RESET_TTL_MIN,
    ]);
    await client.query("commit");
    return { orgId, userId, link: `${appUrl.replace(/\/$/, "")}/reset-password/${token}` };
  } catch (e) {
    await client.query("rollback").catch(() => {});
    throw e;
  } finally {
    await client.end();
  }
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const { values } = parseArgs({ options: { org: { type: "string" }, email: { type: "string" }, name: { type: "string" } } });
  const url = process.env.DATABASE_URL;
  const appUrl = process.env.APP_URL;
  if (!url || !appUrl) {
    console.error("Set DATABASE_URL and APP_URL (the https address people use), then run again.");
    process.exit(2);
  }
  createAdmin(url, appUrl, { org: values.org ?? "", email: values.email ?? "", name: values.name ?? "" }).then(
    ({ link }) => {
      console.log(`Created. Within ${RESET_TTL_MIN} minutes, open this link to choose the admin's password:\n\n  ${link}\n`);
    },
    (e: unknown) => {
      console.error(e instanceof Error ? e.message : String(e));
      process.exit(1);
    },
  );
}
