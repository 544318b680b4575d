/**
 * `npm run create-admin`: the first organisation and admin of a real installation, through the real
 * command line against the test database. The admin gets a one-time link (no password on the
 * command line), chooses a password there and signs in to the new organisation as its admin; an
 * address that already has an account is refused and nothing is written.
 */
import { spawnSync } from "node:child_process";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { createOrg, db } from "../helpers/db";
import { BASE, http, signIn } from "../helpers/http";

const ROOT = join(import.meta.dirname, "../..");

function createAdminCli(args: string[]) {
  const r = spawnSync(process.execPath, [join(ROOT, "node_modules/tsx/dist/cli.mjs"), "scripts/create-admin.ts", ...args], {
    cwd: ROOT,
    env: { ...process.env, APP_URL: BASE },
    encoding: "utf8",
    timeout: 60_000,
  });
  return { status: r.status, out: `${r.stdout}${r.stderr}` };
}

describe("create-admin", () => {
  it("makes an organisation and its admin, who chooses a password through a one-time link and signs in there", async () => {
    const email = `first-admin-${Date.now()}@example.com`;
    const r = createAdminCli(["--org", "Northfield O&M", "--email", email, "--name", "First Admin"]);
    expect(r.status, r.out).toBe(0);
    const path = new RegExp(`${BASE.replace(/[.:/]/g, "\\$&")}(/reset-password/[A-Za-z0-9_-]+)`).exec(r.out)?.[1];
    expect(path, r.out).toBeTruthy();
    // Before a password is chosen, nothing signs in.
    expect((await signIn(email, "any-password-at-all")).res.status).toBe(401);
    const set = await http(path!, { form: { password: "first-admin-password", confirm: "first-admin-password" } });
    expect(set.status).toBe(302);
    const { cookie } = await signIn(email, "first-admin-password");
    expect(cookie).toBeTruthy();
    const users = await http("/settings", { cookie });
    expect(users.status).toBe(200);
    expect(users.body).toContain("First Admin");
    const [row] = await db
      .select({ roles: schema.memberships.roles, org: schema.organisations.name, demo: schema.organisations.isDemo })
      .from(schema.memberships)
      .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
      .innerJoin(schema.organisations, eq(schema.organisations.id, schema.memberships.orgId))
      .where(sql`lower(${schema.users.email}) = ${email}`);
    expect(row).toEqual({ roles: ["admin"], org: "Northfield O&M", demo: false });
    // The link works once.
    expect((await http(path!, { form: { password: "second-password-22", confirm: "second-password-22" } })).status).toBe(400);
  });

  it("refuses an address that already has an account and writes nothing (an existing person is invited instead)", async () => {
    const { people } = await createOrg("ExistingAdmin");
    const orgsBefore = (await db.select().from(schema.organisations)).length;
    const r = createAdminCli(["--org", "Takeover Ltd", "--email", people.pilot.email.toUpperCase(), "--name", "Someone"]);
    expect(r.status).toBe(1);
    expect(r.out).toContain("already has a Sunsift account");
    expect((await db.select().from(schema.organisations)).length).toBe(orgsBefore);
    expect(await db.select().from(schema.organisations).where(eq(schema.organisations.name, "Takeover Ltd"))).toHaveLength(0);
  });

  it("says what is missing instead of creating half an organisation", async () => {
    const r = createAdminCli(["--org", "No Admin Yet", "--email", "not-an-address", "--name", "X"]);
    expect(r.status).toBe(1);
    expect(r.out).toContain("is not an e-mail address");
    expect(await db.select().from(schema.organisations).where(eq(schema.organisations.name, "No Admin Yet"))).toHaveLength(0);
  });
});
