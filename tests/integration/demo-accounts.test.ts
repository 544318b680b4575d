/**
 * The demo accounts share a published password and an admin API token: they go only where asked
 * (`npm start`'s own embedded database, `npm run seed:demo`, SUNSIFT_DEMO=1), the demo
 * organisation is the one marked as such (not whatever carries its name), and `--reset` removes
 * that organisation and its own people only. Each test works in a scratch database of its own,
 * migrated here, through the real command line (seeds/demo.ts) and, once, the real `npm start`.
 */
import { spawnSync } from "node:child_process";
import { join } from "node:path";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import pg from "pg";
import { runMigrations } from "../../scripts/migrate";
import { hashPassword, sha256 } from "../../app/services/password.server";
import { checkoutPorts, runNpm, tempCheckout } from "../helpers/checkout";

const ROOT = join(import.meta.dirname, "../..");
const TSX = join(ROOT, "node_modules/tsx/dist/cli.mjs");
const base = new URL(process.env.DATABASE_URL!);
const scratchName = `${base.pathname.slice(1)}_demo`;
const scratch = new URL(base);
scratch.pathname = `/${scratchName}`;
const SCRATCH_URL = scratch.toString();
const adminUrl = new URL(base);
adminUrl.pathname = "/postgres";

let client: pg.Client;
const q = async <T extends pg.QueryResultRow = Record<string, unknown>>(text: string, values: unknown[] = []) => (await client.query<T>(text, values)).rows;

/** seeds/demo.ts as a person runs it, without SUNSIFT_DEMO unless given. */
function seedCli(args: string[], extraEnv: NodeJS.ProcessEnv = {}) {
  const { SUNSIFT_DEMO: _setting, ...env } = process.env;
  const r = spawnSync(process.execPath, [TSX, "seeds/demo.ts", ...args], {
    cwd: ROOT,
    env: { ...env, DATABASE_URL: SCRATCH_URL, ...extraEnv },
    encoding: "utf8",
    timeout: 60_000,
  });
  return { status: r.status, out: `${r.stdout}${r.stderr}` };
}

async function otherOrg(name: string, emails: string[]) {
  const [org] = await q<{ id: string }>("insert into organisations (name) values ($1) returning id", [name]);
  const hash = await hashPassword("their-own-password-1");
  const ids: string[] = [];
  for (const email of emails) {
    const [u] = await q<{ id: string }>("insert into users (email, name, password_hash) values ($1, $2, $3) returning id", [email, email, hash]);
    await q("insert into memberships (org_id, user_id, roles) values ($1, $2, '{admin}')", [org!.id, u!.id]);
    ids.push(u!.id);
  }
  return { orgId: org!.id, userIds: ids, hash };
}

const demoTokenOrgs = () => q<{ org_id: string; name: string }>("select t.org_id, o.name from api_tokens t join organisations o on o.id = t.org_id where t.token_hash = $1", [sha256("sunsift-demo-token")]);
const membersOf = async (orgId: string) => (await q<{ email: string }>("select u.email from memberships m join users u on u.id = m.user_id where m.org_id = $1 order by 1", [orgId])).map((r) => r.email);
const userIdByEmail = async (email: string) => (await q<{ id: string }>("select id from users where lower(email) = $1", [email]))[0]?.id;

beforeAll(async () => {
  const admin = new pg.Client({ connectionString: adminUrl.toString() });
  await admin.connect();
  await admin.query(`drop database if exists "${scratchName}" with (force)`);
  await admin.query(`create database "${scratchName}"`);
  await admin.end();
  await runMigrations(SCRATCH_URL);
  client = new pg.Client({ connectionString: SCRATCH_URL });
  await client.connect();
});

beforeEach(async () => {
  await q("truncate organisations, users cascade");
});

afterAll(async () => {
  await client?.end();
  const admin = new pg.Client({ connectionString: adminUrl.toString() });
  await admin.connect();
  await admin.query(`drop database if exists "${scratchName}" with (force)`);
  await admin.end();
});

describe("demo seeding", () => {
  it("attack: `seed:demo --reset` deletes only the demo organisation and its own users — another organisation, its people and a demo user who also works there stay", async () => {
    expect(seedCli(["--demo", "--accounts-only"]).status).toBe(0);
    const [demo] = await demoTokenOrgs();
    const oldAdmin = await userIdByEmail("admin@sunsift.test");
    const other = await otherOrg("Real Solar Co", ["ana@realsolar.example", "ben@realsolar.example"]);
    // The demo engineer also works for the real organisation: they stay, with that membership.
    const engineer = (await userIdByEmail("engineer@sunsift.test"))!;
    await q("insert into memberships (org_id, user_id, roles) values ($1, $2, '{engineer}')", [other.orgId, engineer]);

    const reset = seedCli(["--demo", "--reset", "--accounts-only"]);
    expect(reset.status, reset.out).toBe(0);

    expect(await q("select name from organisations where id = $1", [other.orgId])).toEqual([{ name: "Real Solar Co" }]);
    expect(await membersOf(other.orgId)).toEqual(["ana@realsolar.example", "ben@realsolar.example", "engineer@sunsift.test"]);
    expect(await q("select password_hash from users where id = any($1)", [other.userIds])).toEqual([{ password_hash: other.hash }, { password_hash: other.hash }]);
    expect(await userIdByEmail("engineer@sunsift.test")).toBe(engineer);
    // The old demo organisation and its own admin went; the demo was rebuilt once.
    expect(await q("select 1 from organisations where id = $1", [demo!.org_id])).toEqual([]);
    expect(await q("select 1 from users where id = $1", [oldAdmin])).toEqual([]);
    const rebuilt = await demoTokenOrgs();
    expect(rebuilt).toHaveLength(1);
    expect(await membersOf(rebuilt[0]!.org_id)).toHaveLength(6);
    expect(await q("select count(*)::int as n from organisations")).toEqual([{ n: 2 }]);
  });

  it("attack: an organisation merely named like the demo is not taken for it — seeding adds no demo accounts or token to it, a renamed demo is still the one demo, and reset leaves the look-alike alone", async () => {
    const lookalike = await otherOrg("Demo Solar Operations", ["ops@lookalike.example"]);

    expect(seedCli(["--demo", "--accounts-only"]).status).toBe(0);
    expect(await membersOf(lookalike.orgId)).toEqual(["ops@lookalike.example"]);
    const [demo, ...more] = await demoTokenOrgs();
    expect(more).toEqual([]);
    expect(demo!.org_id).not.toBe(lookalike.orgId);

    // Renamed by its admin, the demo is still found by its mark: seeding again makes no second one.
    await q("update organisations set name = 'Our test plant' where id = $1", [demo!.org_id]);
    expect(seedCli(["--demo", "--accounts-only"]).status).toBe(0);
    expect(await demoTokenOrgs()).toEqual([{ org_id: demo!.org_id, name: "Our test plant" }]);
    expect(await q("select count(*)::int as n from organisations")).toEqual([{ n: 2 }]);
    expect(await membersOf(lookalike.orgId)).toEqual(["ops@lookalike.example"]);

    expect(seedCli(["--demo", "--reset", "--accounts-only"]).status).toBe(0);
    expect(await q("select name from organisations where id = $1", [lookalike.orgId])).toEqual([{ name: "Demo Solar Operations" }]);
    expect(await membersOf(lookalike.orgId)).toEqual(["ops@lookalike.example"]);
    expect(await q("select 1 from organisations where id = $1", [demo!.org_id])).toEqual([]);
    expect(await demoTokenOrgs()).toHaveLength(1);
  });

  it("attack: seeding against a database nobody asked the demo for (no --demo, no SUNSIFT_DEMO=1) is refused and writes nothing", async () => {
    for (const args of [[], ["--accounts-only"], ["--reset", "--accounts-only"]]) {
      const r = seedCli(args);
      expect(r.status, r.out).toBe(2);
      expect(r.out).toContain("Not seeding the demo");
    }
    expect(seedCli(["--accounts-only"], { SUNSIFT_DEMO: "0" }).status).toBe(2);
    expect(await q("select count(*)::int as n from organisations")).toEqual([{ n: 0 }]);
    expect(await q("select count(*)::int as n from users")).toEqual([{ n: 0 }]);
    // Asked for, it is seeded.
    expect(seedCli(["--accounts-only"], { SUNSIFT_DEMO: "1" }).status).toBe(0);
    expect(await demoTokenOrgs()).toHaveLength(1);
  });

  it("attack: a demo account an admin deleted is not re-created by the next start's seed", async () => {
    expect(seedCli(["--accounts-only"], { SUNSIFT_DEMO: "1" }).status).toBe(0);
    const [demo] = await demoTokenOrgs();
    await q("delete from users where lower(email) = 'admin@sunsift.test'");
    await q("delete from api_tokens where org_id = $1", [demo!.org_id]);
    // What npm start runs at every start.
    const again = seedCli(["--accounts-only"], { SUNSIFT_DEMO: "1" });
    expect(again.status, again.out).toBe(0);
    expect(await userIdByEmail("admin@sunsift.test")).toBeUndefined();
    expect(await demoTokenOrgs()).toEqual([]);
    expect(await membersOf(demo!.org_id)).toHaveLength(5);
  });

  it("attack: `npm start` against another PostgreSQL server (DATABASE_URL) seeds no demo accounts and prints none", async () => {
    const co = tempCheckout("demo-ext", checkoutPorts(0));
    const run = runNpm(co, ["start"], { DATABASE_URL: SCRATCH_URL });
    try {
      await run.waitFor("Sunsift is running", 90_000);
      expect(run.output()).not.toContain("sunsift-demo");
      expect(run.output()).not.toContain("Seeding the demo");
      expect(await q("select count(*)::int as n from organisations")).toEqual([{ n: 0 }]);
      expect(await q("select count(*)::int as n from users")).toEqual([{ n: 0 }]);
      // No cluster of its own was started for it.
      expect(co.clusterRunning()).toBe(false);
      run.signal("SIGTERM");
      await Promise.race([run.exited, new Promise((r) => setTimeout(r, 30_000))]);
    } finally {
      co.remove();
    }
  }, 150_000);
});
