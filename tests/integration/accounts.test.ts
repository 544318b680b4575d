/**
 * Accounts across organisations: what an invitation may and may not do to an existing account,
 * which organisation a session lands in, that a new password ends the old sessions, what the
 * demo outbox shows of links that let their holder in, and that old password hashes are raised.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { desc, eq, isNull, and } from "drizzle-orm";
import { randomBytes, scryptSync } from "node:crypto";
import { createOrg, db } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import { captureSmtp, decodeQp } from "../helpers/smtp";
import * as schema from "../../app/db/schema";

let smtp: Awaited<ReturnType<typeof captureSmtp>>;
beforeAll(async () => {
  smtp = await captureSmtp();
});
afterAll(async () => {
  await smtp.close();
});

const cookieOf = (res: { headers: Headers }) => res.headers.get("set-cookie")!.split(";")[0]!;

/** The link of the first mail to `to` that arrives after message number `since`. */
async function linkIn(to: string, since: number, re: RegExp): Promise<string> {
  const until = Date.now() + 20_000;
  while (Date.now() < until) {
    const m = smtp.messages.slice(since).find((x) => x.to.includes(to) && re.test(decodeQp(x.raw)));
    if (m) return re.exec(decodeQp(m.raw))![0];
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`no mail to ${to} matching ${re}`);
}

async function invite(adminCookie: string | null, email: string, roles = ["pilot"]) {
  const since = smtp.messages.length;
  const r = await http("/settings", { cookie: adminCookie, form: { intent: "invite", name: "Invited Person", email, roles } });
  expect(r.status).toBe(200);
  return linkIn(email, since, /\/invite\/[A-Za-z0-9_-]+/);
}

async function passwordHashOf(userId: string) {
  const [u] = await db.select({ h: schema.users.passwordHash }).from(schema.users).where(eq(schema.users.id, userId));
  return u!.h;
}

/** The organisation the session behind a cookie works in (the newest session of that person). */
async function sessionOrg(userId: string) {
  const [s] = await db.select().from(schema.sessions).where(and(eq(schema.sessions.userId, userId), isNull(schema.sessions.revokedAt))).orderBy(desc(schema.sessions.createdAt)).limit(1);
  return s!.orgId;
}

describe("invitations to a person who already has an account", () => {
  it("attack: invitation to another organisation's member does not change their password", async () => {
    const attacker = await createOrg("Attacker");
    const victim = await createOrg("Victim");
    const admin = await signIn(attacker.people.admin.email, attacker.password);
    const target = victim.people.engineer;
    const before = await passwordHashOf(target.id);
    const victimSession = await signIn(target.email, victim.password);
    expect(victimSession.res.status).toBe(302);

    // The attacker holds the link (the old outbox showed it) and "accepts" with a password of their choosing.
    const path = await invite(admin.cookie, target.email);
    const page = await http(path);
    expect(page.body).toContain("already has a Sunsift account");
    const taken = await http(path, { form: { password: "attacker-chosen-1" } });
    expect(taken.status).toBe(400);
    expect(taken.headers.get("set-cookie")).toBeNull();
    expect(await passwordHashOf(target.id)).toBe(before);
    expect((await signIn(target.email, "attacker-chosen-1")).res.status).toBe(401);
    // Nothing was joined, the victim keeps their password and their session.
    const ms = await db.select().from(schema.memberships).where(eq(schema.memberships.userId, target.id));
    expect(ms.map((m) => m.orgId)).toEqual([victim.org.id]);
    expect((await http("/portfolio", { cookie: victimSession.cookie })).status).toBe(200);
    const again = await signIn(target.email, victim.password);
    expect(again.res.status).toBe(302);
    expect(await sessionOrg(target.id)).toBe(victim.org.id);
  });

  it("the invited person joins with their own current password (or signed in as themselves); the password stays", async () => {
    const inviting = await createOrg("Inviting");
    const home = await createOrg("Home");
    const admin = await signIn(inviting.people.admin.email, inviting.password);
    const person = home.people.pilot;
    const before = await passwordHashOf(person.id);

    const path = await invite(admin.cookie, person.email, ["technician"]);
    const joined = await http(path, { form: { password: home.password } });
    expect(joined.status).toBe(302);
    expect(await passwordHashOf(person.id)).toBe(before);
    const [m] = await db.select().from(schema.memberships).where(and(eq(schema.memberships.userId, person.id), eq(schema.memberships.orgId, inviting.org.id)));
    expect(m).toMatchObject({ roles: ["technician"], active: true });

    // Signed in as that person, a second invitation is joined without typing the password.
    const third = await createOrg("Third");
    const admin3 = await signIn(third.people.admin.email, third.password);
    const path3 = await invite(admin3.cookie, person.email, ["owner"]);
    const mine = await signIn(person.email, home.password);
    expect((await http(path3, { cookie: mine.cookie })).body).toContain("You are signed in as");
    const joined3 = await http(path3, { cookie: mine.cookie, form: {} });
    expect(joined3.status).toBe(302);
    const all = await db.select().from(schema.memberships).where(eq(schema.memberships.userId, person.id));
    expect(all.map((x) => x.orgId).sort()).toEqual([home.org.id, inviting.org.id, third.org.id].sort());
  });

  it("attack: a brute force through the invitation page meets the sign-in limits", async () => {
    const a = await createOrg("InvBrute");
    const b = await createOrg("InvBruteVictim");
    const admin = await signIn(a.people.admin.email, a.password);
    const path = await invite(admin.cookie, b.people.owner.email);
    const statuses: number[] = [];
    for (let i = 0; i < 7; i++) statuses.push((await http(path, { form: { password: `guess-number-${i}` } })).status);
    expect(statuses.slice(0, 5)).toEqual([400, 400, 400, 400, 400]);
    expect(statuses.slice(5)).toEqual([429, 429]);
    // Even the right password waits now, like at the sign-in.
    expect((await http(path, { form: { password: b.password } })).status).toBe(429);
  });
});

describe("organisations of one person", () => {
  it("a sign-in lands in the organisation used last; the person can switch, and the next sign-in lands there", async () => {
    const first = await createOrg("First");
    const second = await createOrg("Second");
    const admin2 = await signIn(second.people.admin.email, second.password);
    const person = first.people.lead;
    const path = await invite(admin2.cookie, person.email, ["lead"]);
    // Joining starts a session in the new organisation: that is now the one used last.
    expect((await http(path, { form: { password: first.password } })).status).toBe(302);
    for (let i = 0; i < 3; i++) {
      await signIn(person.email, first.password);
      expect(await sessionOrg(person.id)).toBe(second.org.id);
    }
    const s = await signIn(person.email, first.password);
    const layout = await http("/portfolio", { cookie: s.cookie });
    expect(layout.body).toContain("switch organisation");
    const choice = await http("/organisations", { cookie: s.cookie });
    expect(choice.status).toBe(200);
    expect(choice.body).toContain(first.org.name);
    expect(choice.body).toContain(second.org.name);
    const switched = await http("/organisations", { cookie: s.cookie, form: { orgId: first.org.id } });
    expect(switched.status).toBe(302);
    const newCookie = cookieOf(switched);
    expect((await http("/portfolio", { cookie: s.cookie })).status).toBe(302); // the old session ended
    expect((await http("/portfolio", { cookie: newCookie })).body).toContain(first.site.name);
    expect(await sessionOrg(person.id)).toBe(first.org.id);
    await signIn(person.email, first.password);
    expect(await sessionOrg(person.id)).toBe(first.org.id);
    // An organisation the person does not belong to cannot be chosen.
    const stranger = await createOrg("Stranger");
    expect((await http("/organisations", { cookie: newCookie, form: { orgId: stranger.org.id } })).status).toBe(404);
  });

  it("a person in one organisation is offered no switch", async () => {
    const one = await createOrg("Single");
    const s = await signIn(one.people.engineer.email, one.password);
    expect((await http("/portfolio", { cookie: s.cookie })).body).not.toContain("switch organisation");
  });
});

describe("a new password", () => {
  it("attack: a session kept from before a password reset is ended by the reset, in every organisation", async () => {
    const a = await createOrg("ResetA");
    const b = await createOrg("ResetB");
    const adminB = await signIn(b.people.admin.email, b.password);
    const person = a.people.technician;
    const path = await invite(adminB.cookie, person.email, ["technician"]);
    expect((await http(path, { form: { password: a.password } })).status).toBe(302);
    // Two sessions (a thief's and the person's), one in each organisation.
    const inB = await signIn(person.email, a.password);
    await http("/organisations", { cookie: inB.cookie, form: { orgId: a.org.id } });
    const inA = await signIn(person.email, a.password);
    const inB2 = await signIn(person.email, a.password);
    const sw = await http("/organisations", { cookie: inB2.cookie, form: { orgId: b.org.id } });
    const kept = [inA.cookie!, cookieOf(sw)];
    for (const c of kept) expect((await http("/portfolio", { cookie: c })).status).toBe(200);

    await http("/forgot-password", { form: { email: person.email } });
    const mail = await smtp.waitFor(person.email, /reset-password\//);
    const reset = /\/reset-password\/[A-Za-z0-9_-]+/.exec(mail)![0];
    expect((await http(reset, { form: { password: "brand-new-password-1", confirm: "brand-new-password-1" } })).status).toBe(302);
    for (const c of kept) expect((await http("/portfolio", { cookie: c })).status).toBe(302);
    expect((await signIn(person.email, "brand-new-password-1")).res.status).toBe(302);
  });
});

describe("demo outbox and My e-mails", () => {
  it("attack: an admin cannot read another person's invitation link in the outbox; the reset mail is in no outbox", async () => {
    const org = await createOrg("OutboxMask");
    const admin = await signIn(org.people.admin.email, org.password);
    const email = `masked-${Date.now()}@example.com`;
    const path = await invite(admin.cookie, email);
    const token = path.split("/").at(-1)!;
    const page = await http("/settings/outbox", { cookie: admin.cookie });
    expect(page.status).toBe(200);
    expect(page.body).toContain(`to ${email}`);
    expect(page.body).toContain("/invite/••••••");
    expect(page.body).not.toContain(token);
    // The page's data as the browser fetches it between screens: masked too.
    const dataRes = await http("/settings/outbox.data", { cookie: admin.cookie });
    expect(dataRes.body).not.toContain(token);

    // A member's password reset is their own business: filed under no organisation.
    await http("/forgot-password", { form: { email: org.people.pilot.email } });
    const mail = await smtp.waitFor(org.people.pilot.email, /reset-password\//);
    const resetToken = /\/reset-password\/([A-Za-z0-9_-]+)/.exec(mail)![1]!;
    const [row] = await db.select().from(schema.emails).where(and(eq(schema.emails.to, org.people.pilot.email), eq(schema.emails.kind, "password-reset")));
    expect(row!.orgId).toBeNull();
    const after = await http("/settings/outbox", { cookie: admin.cookie });
    expect(after.body).not.toContain("Reset your Sunsift password");
    expect(after.body).not.toContain(resetToken);
  });

  it("the recipient reads their own mails, links included, under My e-mails; nobody else's", async () => {
    const a = await createOrg("MineA");
    const b = await createOrg("MineB");
    const adminA = await signIn(a.people.admin.email, a.password);
    const person = b.people.owner;
    const path = await invite(adminA.cookie, person.email, ["owner"]);
    const me = await signIn(person.email, b.password);
    const mine = await http("/settings/notifications", { cookie: me.cookie });
    expect(mine.status).toBe(200);
    expect(mine.body).toContain("E-mails sent to me");
    expect(mine.body).toContain(path);
    // The inviting admin's own "My e-mails" does not list it.
    const theirs = await http("/settings/notifications", { cookie: adminA.cookie });
    expect(theirs.body).not.toContain(path.split("/").at(-1)!);
  });
});

describe("password hashing", () => {
  it("a hash made with the old, weaker scrypt parameters still signs in, and is stored at the current ones afterwards", async () => {
    const org = await createOrg("Rehash");
    const salt = randomBytes(16);
    const key = scryptSync("old-hash-password-1", salt, 64, { N: 16384, r: 8, p: 1 });
    const old = `scrypt$16384$8$1$${salt.toString("base64")}$${key.toString("base64")}`;
    await db.update(schema.users).set({ passwordHash: old }).where(eq(schema.users.id, org.people.pilot.id));
    expect((await signIn(org.people.pilot.email, "old-hash-password-1")).res.status).toBe(302);
    const now = await passwordHashOf(org.people.pilot.id);
    expect(now).toMatch(/^scrypt\$131072\$8\$1\$/);
    expect(now).not.toBe(old);
    expect((await signIn(org.people.pilot.email, "old-hash-password-1")).res.status).toBe(302);
    expect((await signIn(org.people.pilot.email, "not-the-password")).res.status).toBe(401);
  });

  it("new passwords are hashed at N=2^17, r=8, p=1", async () => {
    const org = await createOrg("NewHash");
    expect(await passwordHashOf(org.people.admin.id)).toMatch(/^scrypt\$131072\$8\$1\$/);
  });
});
