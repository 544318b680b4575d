import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { createOrg, db } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import { captureSmtp } from "../helpers/smtp";
import * as schema from "../../app/db/schema";

let smtp: Awaited<ReturnType<typeof captureSmtp>>;
beforeAll(async () => {
  smtp = await captureSmtp();
});
afterAll(async () => {
  await smtp.close();
});

describe("password reset by e-mail", () => {
  it("sends a link that works once, within its time", async () => {
    const { people } = await createOrg("Reset");
    const r = await http("/forgot-password", { form: { email: people.pilot.email } });
    expect(r.status).toBe(200);
    expect(r.body).toContain("If that address has an account");
    const mail = await smtp.waitFor(people.pilot.email, /reset-password\//);
    const path = /\/reset-password\/[A-Za-z0-9_-]+/.exec(mail)![0];

    const weak = await http(path, { form: { password: "short", confirm: "short" } });
    expect(weak.status).toBe(400);
    expect(weak.body).toContain("Use at least 10 characters");

    const ok = await http(path, { form: { password: "a-new-password-1", confirm: "a-new-password-1" } });
    expect(ok.status).toBe(302);
    // The sign-in page it lands on says the change went through.
    expect(ok.location).toBe("/login?reset=1");
    expect((await http(ok.location!)).body).toContain("Your password was changed. Sign in with the new one.");
    expect((await signIn(people.pilot.email, "a-new-password-1")).res.status).toBe(302);

    const again = await http(path, { form: { password: "another-password-2", confirm: "another-password-2" } });
    expect(again.status).toBe(400);
    expect(again.body).toContain("expired or was already used");
    expect((await signIn(people.pilot.email, "another-password-2")).res.status).toBe(401);
  });

  it("answers the same for an unknown address and sends nothing", async () => {
    const before = smtp.messages.length;
    const r = await http("/forgot-password", { form: { email: "nobody-known@example.com" } });
    expect(r.status).toBe(200);
    expect(r.body).toContain("If that address has an account");
    await new Promise((res) => setTimeout(res, 500));
    expect(smtp.messages.slice(before).some((m) => m.to.includes("nobody-known@example.com"))).toBe(false);
  });

  it("an expired link is refused", async () => {
    const { people } = await createOrg("Expired");
    await http("/forgot-password", { form: { email: people.owner.email } });
    const mail = await smtp.waitFor(people.owner.email, /reset-password\//);
    const path = /\/reset-password\/[A-Za-z0-9_-]+/.exec(mail)![0];
    await db.update(schema.passwordResets).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(schema.passwordResets.userId, people.owner.id));
    const r = await http(path, { form: { password: "a-new-password-1", confirm: "a-new-password-1" } });
    expect(r.status).toBe(400);
  });
});

describe("invitations", () => {
  it("an admin invites a person with two roles; the link lets them choose a password and sign in with those roles", async () => {
    const { people, password, org } = await createOrg("Invite");
    const admin = await signIn(people.admin.email, password);
    const email = `new-${Date.now()}@example.com`;
    const r = await http("/settings", { cookie: admin.cookie, form: { intent: "invite", name: "Nia New", email, roles: ["pilot", "technician"] } });
    expect(r.status).toBe(200);
    expect(r.body).toContain(`Invitation sent to ${email}`);
    const mail = await smtp.waitFor(email, /invite\//);
    expect(mail).toContain("Pilot, Technician");
    const path = /\/invite\/[A-Za-z0-9_-]+/.exec(mail)![0];
    const accepted = await http(path, { form: { password: "invited-password-1" } });
    expect(accepted.status).toBe(302);
    const cookie = accepted.headers.get("set-cookie")!.split(";")[0]!;
    expect((await http("/portfolio", { cookie })).status).toBe(200);
    const [u] = await db.select().from(schema.users).where(eq(schema.users.email, email));
    const [m] = await db.select().from(schema.memberships).where(eq(schema.memberships.userId, u!.id));
    expect(m).toMatchObject({ orgId: org.id, roles: ["pilot", "technician"], active: true });
    expect((await http(path, { form: { password: "invited-password-2" } })).status).toBe(400);
  });

  it("refuses an invitation without a role, with the message beside the field", async () => {
    const { people, password } = await createOrg("InviteBad");
    const admin = await signIn(people.admin.email, password);
    const r = await http("/settings", { cookie: admin.cookie, form: { intent: "invite", name: "X", email: "x-person@example.com" } });
    expect(r.status).toBe(400);
    expect(r.body).toContain("Choose at least one role");
  });

  it("admins read what was sent on the outbox page", async () => {
    const { people, password } = await createOrg("Outbox");
    const admin = await signIn(people.admin.email, password);
    await http("/settings", { cookie: admin.cookie, form: { intent: "invite", name: "Obi Outbox", email: "obi-outbox@example.com", roles: ["owner"] } });
    const page = await http("/settings/outbox", { cookie: admin.cookie });
    expect(page.status).toBe(200);
    expect(page.body).toContain("to obi-outbox@example.com");
    expect(page.body).toContain("You are invited to");
    // The link is the recipient's: masked here (they read it in their mailbox, or under My e-mails).
    const link = /\/invite\/[A-Za-z0-9_-]+/.exec(await smtp.waitFor("obi-outbox@example.com", /invite\//))![0];
    expect(page.body).toContain("/invite/••••••");
    expect(page.body).not.toContain(link);
  });
});
