/**
 * Field work end to end against the running app: a work order from a flag, the assignment
 * e-mail on a fake SMTP server started here, the technician's close-out, and the recovery check
 * from combiner_days written directly (recovered, and not recovered with a plain message).
 * Also each other e-mail kind: due soon, overdue, the leads' digest, import finished / failed.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SMTPServer } from "smtp-server";
import { and, eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { createOrg, db } from "../helpers/db";
import { http, signIn } from "../helpers/http";
import { addDays, localDay } from "../../app/domain/work-orders";
import { verifyRecoveries } from "../../app/models/recovery.server";
import { notifyImportFinished, runDailyDigest, runDueReminders } from "../../app/jobs/notifications.server";

interface Received { to: string[]; subject: string; text: string }
const received: Received[] = [];
let smtp: SMTPServer;

function parse(raw: string, to: string[]): Received {
  const unfolded = raw.replace(/\r?\n[ \t]+/g, " ");
  const subject = /^Subject: (.*)$/m.exec(unfolded)?.[1]?.trim() ?? "";
  const body = raw.split(/\r?\n\r?\n/).slice(1).join("\n\n").replace(/=\r?\n/g, "");
  return { to, subject, text: body };
}

async function waitFor(pred: (m: Received) => boolean, ms = 15_000): Promise<Received> {
  const end = Date.now() + ms;
  for (;;) {
    const m = received.find(pred);
    if (m) return m;
    if (Date.now() > end) throw new Error(`no such e-mail; got: ${received.map((r) => `${r.to.join(",")}: ${r.subject}`).join(" | ")}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

let org: Awaited<ReturnType<typeof createOrg>>;
let lead: string;
let tech: string;
let today: string;
const combiners: Record<string, number> = {};

async function combinerDaysFor(combinerId: number, from: string, n: number, oi: number, lostKwh: number) {
  const rows = [];
  for (let i = 0; i < n; i++)
    rows.push({ siteId: org.site.id, combinerId, day: addDays(from, i), validIntervals: 60, totalIntervals: 100, outputIndex: oi, peerMedianOi: 1, lostKwh });
  await db.insert(schema.combinerDays).values(rows).onConflictDoNothing();
}

beforeAll(async () => {
  smtp = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    logger: false,
    onData(stream, session, cb) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        received.push(parse(Buffer.concat(chunks).toString("utf8"), session.envelope.rcptTo.map((r) => r.address)));
        cb();
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    smtp.once("error", reject);
    smtp.listen(Number(process.env.SMTP_PORT), "127.0.0.1", () => resolve());
  });
  org = await createOrg("Field");
  today = localDay(new Date(), "Europe/Madrid");
  const [blk] = await db.insert(schema.blocks).values({ siteId: org.site.id, name: "B1" }).returning();
  for (const name of ["B1-I1-C01", "B1-I1-C02"]) {
    const [c] = await db.insert(schema.devices).values({ siteId: org.site.id, kind: "combiner", name, blockId: blk!.id, stringCount: 12 }).returning();
    combiners[name] = c!.id;
    await db.insert(schema.strings).values(Array.from({ length: 12 }, (_, i) => ({ combinerId: c!.id, number: i + 1, modules: 28, x: i * 5, y: name.endsWith("1") ? 0 : 10 })));
  }
  lead = (await signIn(org.people.lead.email, org.password)).cookie!;
  tech = (await signIn(org.people.technician.email, org.password)).cookie!;
});

afterAll(async () => {
  await new Promise<void>((r) => smtp.close(() => r()));
});

async function newFlag(combiner: string, firstDay: string) {
  const [f] = await db
    .insert(schema.flags)
    .values({ siteId: org.site.id, combinerId: combiners[combiner]!, state: "new", firstDay, lastDay: today, stringsOut: 1, confidence: 0.95, lostKwhPerDay: 10, lostKwhToDate: 200 })
    .returning();
  return f!;
}

async function flagState(id: string) {
  const [f] = await db.select().from(schema.flags).where(eq(schema.flags.id, id));
  return f!;
}

describe("work order from a flag to a verified recovery", () => {
  const repairDay = () => addDays(today, -8);

  it("the lead creates it from the flag: prefilled, assigned, flag in field, e-mail to the technician", async () => {
    const flag = await newFlag("B1-I1-C01", addDays(today, -25));
    // The flags screen links the lead to the order form for that flag; the engineer only reads.
    const link = `/sites/${org.site.id}/work-orders/new?flagId=${flag.id}`;
    expect((await http(`/sites/${org.site.id}/flags`, { cookie: lead })).body).toContain(`href="${link}"`);
    const engineer = (await signIn(org.people.engineer.email, org.password)).cookie!;
    const asEngineer = await http(`/sites/${org.site.id}/flags`, { cookie: engineer });
    expect(asEngineer.body).toContain("B1-I1-C01");
    expect(asEngineer.body).not.toContain("Create work order");
    const form = await http(`/sites/${org.site.id}/work-orders/new?flagId=${flag.id}`, { cookie: lead });
    expect(form.status).toBe(200);
    expect(form.body).toContain("B1-I1-C01: 1 string out");
    expect(form.body).toContain("Check the fuses, connectors and cables of combiner B1-I1-C01");

    const res = await http(`/sites/${org.site.id}/work-orders/new`, {
      cookie: lead,
      form: { flagId: flag.id, combiner: "B1-I1-C01", strings: "7", title: "B1-I1-C01: 1 string out", whatToCheck: "", assigneeId: org.people.technician.id, dueOn: addDays(today, 3), priority: "high" },
    });
    expect(res.status).toBe(302);
    const woId = res.location!.split("/").pop()!;
    const [wo] = await db.select().from(schema.workOrders).where(eq(schema.workOrders.id, woId));
    expect(wo!.state).toBe("assigned");
    expect(wo!.stringNumbers).toEqual([7]);
    expect(wo!.whatToCheck).toBe("Check connectors, fuse and cable of string 7 on combiner B1-I1-C01. Measure the string current before and after.");
    expect((await flagState(flag.id)).state).toBe("in field");

    const mail = await waitFor((m) => m.to.includes(org.people.technician.email) && m.subject.includes("assigned to you"));
    expect(mail.subject).toBe("WO-0001 assigned to you: B1-I1-C01: 1 string out");
    expect(mail.text).toContain("combiner B1-I1-C01, string 7");

    // Detail: safety block, drawing, the technician's buttons.
    const page = await http(`/sites/${org.site.id}/work-orders/${woId}`, { cookie: tech });
    expect(page.status).toBe(200);
    expect(page.body).toContain("DC stays live while the sun shines");
    expect(page.body).toContain("Verify the absence of voltage");
    expect(page.body).toContain("Close as done");

    // Another technician's order: a pilot or an owner cannot act on it.
    const owner = (await signIn(org.people.owner.email, org.password)).cookie!;
    expect((await http(`/sites/${org.site.id}/work-orders/${woId}`, { cookie: owner, form: { intent: "move", to: "in progress" } })).status).toBe(403);

    // Before the repair the combiner ran one string short.
    await combinerDaysFor(combiners["B1-I1-C01"]!, addDays(repairDay(), -7), 7, 11 / 12, 10);

    // Technician: start, then close out.
    expect((await http(`/sites/${org.site.id}/work-orders/${woId}`, { cookie: tech, form: { intent: "move", to: "in progress" } })).status).toBe(200);
    const bad = await http(`/sites/${org.site.id}/work-orders/${woId}`, { cookie: tech, form: { intent: "close", workDone: "", minutesSpent: "x", repairedOn: repairDay() } });
    expect(bad.status).toBe(400);
    expect(bad.body).toContain("Choose what you found");
    const closed = await http(`/sites/${org.site.id}/work-orders/${woId}`, {
      cookie: tech,
      form: { intent: "close", resolution: "fuse blown", workDone: "Replaced the 15 A fuse of string 7", minutesSpent: "40", repairedOn: repairDay() },
    });
    expect(closed.status).toBe(200);
    const [done] = await db.select().from(schema.workOrders).where(eq(schema.workOrders.id, woId));
    expect(done!.state).toBe("done");
    expect(done!.resolution).toBe("fuse blown");
    expect(done!.closedAt).not.toBeNull();

    // No after-days yet: the flag waits in "verifying".
    expect((await flagState(flag.id)).state).toBe("verifying");
    const [rec0] = await db.select().from(schema.recoveries).where(eq(schema.recoveries.workOrderId, woId));
    expect(rec0!.status).toBe("verifying");
    expect(rec0!.message).toBe("Waiting for data: 0 of 5 clean days after the repair, 5 of 5 before.");

    // The analysis writes the days after the repair: back to the peers.
    await combinerDaysFor(combiners["B1-I1-C01"]!, addDays(repairDay(), 1), 6, 1.0, 0);
    const out = await verifyRecoveries(org.site.id);
    expect(out.recovered).toBe(1);
    const [rec] = await db.select().from(schema.recoveries).where(eq(schema.recoveries.workOrderId, woId));
    expect(rec!.status).toBe("recovered");
    expect(rec!.recoveredStrings).toBe(1);
    // expected = lost ÷ (1 − r) = 10 ÷ (1/12) = 120 kWh/day; recovered = (1 − 11/12)·120 = 10 kWh/day [X];
    // ×365 at 55 per MWh = 200.75 a year [X]
    expect(rec!.kwhPerDay).toBeCloseTo(10, 9);
    expect(rec!.annualValue).toBeCloseTo(200.75, 6);
    const f = await flagState(flag.id);
    expect(f.state).toBe("recovered");
    expect(f.stateReason).toContain("Recovered: 1 string back");
    const events = await db.select().from(schema.flagEvents).where(eq(schema.flagEvents.flagId, flag.id));
    expect(events.map((e) => e.toState)).toEqual(["in field", "verifying", "recovered"]);

    // The owner sees it on the recovery screen, the CSV and the portfolio.
    const recovery = await http(`/sites/${org.site.id}/recovery`, { cookie: owner });
    expect(recovery.status).toBe(200);
    expect(recovery.body).toContain("Recovered: 1 string back");
    const csv = await http(`/sites/${org.site.id}/recovery.csv`, { cookie: owner });
    expect(csv.headers.get("content-type")).toContain("text/csv");
    expect(csv.body.split("\r\n")[1]).toMatch(/^WO-0001,B1-I1-C01: 1 string out,B1-I1-C01,7,/);
    const portfolio = await http("/portfolio", { cookie: owner });
    expect(portfolio.body).toMatch(/\d+ kWh · [\d.,]+ EUR/);
  });

  it("no recovery: the flag goes back with a plain message", async () => {
    const flag = await newFlag("B1-I1-C02", addDays(today, -25));
    const res = await http(`/sites/${org.site.id}/work-orders/new`, {
      cookie: lead,
      form: { flagId: flag.id, combiner: "B1-I1-C02", strings: "", title: "B1-I1-C02 low", assigneeId: "", dueOn: "", priority: "normal" },
    });
    expect(res.status).toBe(302);
    const woId = res.location!.split("/").pop()!;
    // Assign from the detail page, then the technician closes it with nothing found.
    expect((await http(`/sites/${org.site.id}/work-orders/${woId}`, { cookie: lead, form: { intent: "assign", assigneeId: org.people.technician.id } })).status).toBe(200);
    await combinerDaysFor(combiners["B1-I1-C02"]!, addDays(repairDay(), -7), 7, 11 / 12, 10);
    await combinerDaysFor(combiners["B1-I1-C02"]!, addDays(repairDay(), 1), 6, 11 / 12, 10);
    const closed = await http(`/sites/${org.site.id}/work-orders/${woId}`, {
      cookie: tech,
      form: { intent: "close", resolution: "nothing found", workDone: "All fuses and connectors fine", minutesSpent: "25", repairedOn: repairDay() },
    });
    expect(closed.status).toBe(200);
    const [rec] = await db.select().from(schema.recoveries).where(eq(schema.recoveries.workOrderId, woId));
    expect(rec!.status).toBe("not recovered");
    expect(rec!.message).toMatch(/^Not recovered: 5 clean days after the repair the combiner is still about 1 string below its peers \(91\.7 %, was 91\.7 %\)\. Nothing was found on site/);
    const f = await flagState(flag.id);
    expect(f.state).toBe("needs flight");
    expect(f.stateReason).toContain("Not recovered");
  });

  it("a done order cannot be cancelled", async () => {
    const [wo] = await db.select().from(schema.workOrders).where(and(eq(schema.workOrders.siteId, org.site.id), eq(schema.workOrders.number, 1)));
    const r = await http(`/sites/${org.site.id}/work-orders/${wo!.id}`, { cookie: lead, form: { intent: "move", to: "cancelled" } });
    expect(r.status).toBe(403);
  });
});

describe("each e-mail kind arrives", () => {
  it("due soon and overdue, once each", async () => {
    const res = await http(`/sites/${org.site.id}/work-orders/new`, {
      cookie: lead,
      form: { combiner: "B1-I1-C02", strings: "3", title: "Due check", assigneeId: org.people.technician.id, dueOn: addDays(today, 1), priority: "normal" },
    });
    const woId = res.location!.split("/").pop()!;
    const morning = new Date(`${today}T09:00:00Z`);
    await runDueReminders(morning);
    await waitFor((m) => m.to.includes(org.people.technician.email) && /is due soon: Due check$/.test(m.subject));
    const before = received.length;
    await runDueReminders(morning);
    await new Promise((r) => setTimeout(r, 300));
    expect(received.slice(before).filter((m) => m.subject.includes("Due check"))).toEqual([]);
    await db.update(schema.workOrders).set({ dueOn: addDays(today, -1) }).where(eq(schema.workOrders.id, woId));
    await runDueReminders(morning);
    const over = await waitFor((m) => m.to.includes(org.people.technician.email) && /is overdue: Due check$/.test(m.subject));
    expect(over.text).toContain(`was due ${addDays(today, -1)}`);
  });

  it("the O&M lead's daily digest", async () => {
    await runDailyDigest(new Date());
    const m = await waitFor((x) => x.to.includes(org.people.lead.email) && x.subject.startsWith("Sunsift daily digest"));
    expect(m.text).toContain(org.site.name);
    expect(m.text).toContain("Flags that need a drone flight: 1");
    expect(m.text).toContain("WO-0001 B1-I1-C01: 1 string out");
  });

  it("import finished and failed, for the uploader, unless they opted out", async () => {
    const base = { orgId: org.org.id, siteId: org.site.id, kind: "readings" as const, fileName: "export.csv", objectKey: "k", createdBy: org.people.engineer.id };
    const [ok] = await db.insert(schema.imports).values({ ...base, status: "done", rowsAccepted: 1200, rowsRejected: 3 }).returning();
    const [bad] = await db.insert(schema.imports).values({ ...base, fileName: "broken.csv", status: "failed", error: "The file is not valid UTF-8 text." }).returning();
    expect(await notifyImportFinished(ok!.id)).toBe(true);
    expect(await notifyImportFinished(bad!.id)).toBe(true);
    const m1 = await waitFor((m) => m.to.includes(org.people.engineer.email) && m.subject === "Import finished: export.csv");
    expect(m1.text).toContain("Rows loaded: 1,200; rows set aside: 3");
    const m2 = await waitFor((m) => m.to.includes(org.people.engineer.email) && m.subject === "Import failed: broken.csv");
    expect(m2.text).toContain("not valid UTF-8");

    const eng = (await signIn(org.people.engineer.email, org.password)).cookie!;
    const saved = await http("/settings/notifications", { cookie: eng, form: { assignment: "on", due: "on", digest: "on" } });
    expect(saved.status).toBe(200);
    expect(await notifyImportFinished(ok!.id)).toBe(false);
  });

  it("the audit trail shows work orders and flag states to admins", async () => {
    const admin = (await signIn(org.people.admin.email, org.password)).cookie!;
    const page = await http("/settings/audit?entity=flag", { cookie: admin });
    expect(page.status).toBe(200);
    expect(page.body).toContain("flag.state");
    const wo = await http("/settings/audit?entity=work_order", { cookie: admin });
    expect(wo.body).toContain("workorder.close");
  });
});
