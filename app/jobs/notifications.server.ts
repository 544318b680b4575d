/**
 * The e-mails that keep field work moving: assignment (at once), due soon / overdue (hourly
 * check, sent once each in the site's morning), the O&M lead's daily digest, and import
 * finished / failed for the uploader. Each respects the person's notification_prefs.
 */
import { and, eq, gte, inArray, isNotNull, sql } from "drizzle-orm";
import { db, type Db } from "~/db/client.server";
import { blocks, devices, flags, imports, memberships, notificationPrefs, organisations, sites, users, workOrders, type WorkOrder } from "~/db/schema";
import {
  assignmentMail,
  digestIsEmpty,
  digestMail,
  dueMail,
  dueNotices,
  importMail,
  wants,
  type DigestSite,
  type NotificationKind,
  type WorkOrderMailInfo,
} from "~/domain/notifications";
import { localDay } from "~/domain/work-orders";
import { env } from "~/env.server";
import { sendEmail } from "~/services/mail.server";
import { boss } from "./queue.server";
import { registerHandler } from "./worker.server";

async function prefsOf(userId: string, conn: Db) {
  const [p] = await conn.select().from(notificationPrefs).where(eq(notificationPrefs.userId, userId)).limit(1);
  return p ?? null;
}

async function mailInfo(wo: WorkOrder, conn: Db): Promise<WorkOrderMailInfo> {
  const [site] = await conn.select({ name: sites.name }).from(sites).where(eq(sites.id, wo.siteId)).limit(1);
  const [comb] = wo.combinerId ? await conn.select({ name: devices.name }).from(devices).where(eq(devices.id, wo.combinerId)).limit(1) : [];
  const [blk] = !comb && wo.blockId ? await conn.select({ name: blocks.name }).from(blocks).where(eq(blocks.id, wo.blockId)).limit(1) : [];
  const where = comb
    ? `combiner ${comb.name}${wo.stringNumbers.length ? `, string${wo.stringNumbers.length > 1 ? "s" : ""} ${wo.stringNumbers.join(", ")}` : ""}`
    : blk
      ? `block ${blk.name}`
      : "the site";
  return {
    number: wo.number,
    title: wo.title,
    site: site?.name ?? "the site",
    where,
    whatToCheck: wo.whatToCheck,
    dueOn: wo.dueOn,
    priority: wo.priority,
    url: `${env().APP_URL}/sites/${wo.siteId}/work-orders/${wo.id}`,
  };
}

async function send(kind: NotificationKind, orgId: string, user: { id: string; email: string }, mail: { subject: string; text: string }, meta: Record<string, unknown>, conn: Db) {
  if (!wants(await prefsOf(user.id, conn), kind)) return false;
  await sendEmail({ orgId, kind, to: user.email, subject: mail.subject, text: mail.text, meta });
  return true;
}

/** E-mail the assignee of a work order that was just assigned. Answers whether one was sent. */
export async function notifyAssignment(workOrderId: string, conn: Db = db()): Promise<boolean> {
  const [wo] = await conn.select().from(workOrders).where(eq(workOrders.id, workOrderId)).limit(1);
  if (!wo?.assigneeId) return false;
  const [u] = await conn.select().from(users).where(eq(users.id, wo.assigneeId)).limit(1);
  if (!u) return false;
  return send("assignment", wo.orgId, u, assignmentMail(await mailInfo(wo, conn), u.name), { workOrderId: wo.id }, conn);
}

/** Local hour from which the morning reminders go out. */
const MORNING_HOUR = 6;

/** Due-soon and overdue reminders, once each per work order. `now` is for tests. */
export async function runDueReminders(now = new Date(), conn: Db = db()): Promise<number> {
  const active = await conn
    .select({ wo: workOrders, timezone: sites.timezone })
    .from(workOrders)
    .innerJoin(sites, eq(sites.id, workOrders.siteId))
    .where(and(inArray(workOrders.state, ["open", "assigned", "in progress"]), isNotNull(workOrders.dueOn), isNotNull(workOrders.assigneeId)));
  let sent = 0;
  const byTz = new Map<string, typeof active>();
  for (const a of active) byTz.set(a.timezone, [...(byTz.get(a.timezone) ?? []), a]);
  for (const [tz, list] of byTz) {
    const hour = Number(new Intl.DateTimeFormat("en-GB", { timeZone: tz, hour: "2-digit", hourCycle: "h23" }).format(now));
    if (hour < MORNING_HOUR) continue;
    const today = localDay(now, tz);
    const notices = dueNotices(list.map((a) => a.wo), today);
    for (const n of notices) {
      const wo = list.find((a) => a.wo.id === n.id)!.wo;
      const [u] = await conn.select().from(users).where(eq(users.id, wo.assigneeId!)).limit(1);
      if (u && (await send(n.kind, wo.orgId, u, dueMail(n.kind, await mailInfo(wo, conn)), { workOrderId: wo.id }, conn))) sent++;
      await conn
        .update(workOrders)
        .set(n.kind === "overdue" ? { overdueNotifiedAt: now } : { dueSoonNotifiedAt: now })
        .where(eq(workOrders.id, wo.id));
    }
  }
  return sent;
}

/** The O&M leads' digest of the last 24 hours, per organisation. */
export async function runDailyDigest(now = new Date(), conn: Db = db()): Promise<number> {
  const since = new Date(now.getTime() - 24 * 3600_000);
  const orgs = await conn.select({ id: organisations.id }).from(organisations);
  let sent = 0;
  for (const org of orgs) {
    const leads = await conn
      .select({ id: users.id, email: users.email })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(and(eq(memberships.orgId, org.id), eq(memberships.active, true), sql`'lead' = any(${memberships.roles})`));
    if (!leads.length) continue;
    const orgSites = await conn.select({ id: sites.id, name: sites.name }).from(sites).where(eq(sites.orgId, org.id));
    const digest: DigestSite[] = [];
    for (const s of orgSites) {
      const newFlags = await conn
        .select({ combiner: devices.name, stringsOut: flags.stringsOut, lostKwhPerDay: flags.lostKwhPerDay })
        .from(flags)
        .innerJoin(devices, eq(devices.id, flags.combinerId))
        .where(and(eq(flags.siteId, s.id), eq(flags.open, true), gte(flags.createdAt, since)));
      const [nf] = await conn
        .select({ n: sql<number>`count(*)::int` })
        .from(flags)
        .where(and(eq(flags.siteId, s.id), eq(flags.open, true), eq(flags.state, "needs flight")));
      const done = await conn
        .select({ number: workOrders.number, title: workOrders.title, resolution: workOrders.resolution })
        .from(workOrders)
        .where(and(eq(workOrders.siteId, s.id), eq(workOrders.state, "done"), gte(workOrders.closedAt, since)));
      digest.push({ site: s.name, url: `${env().APP_URL}/sites/${s.id}`, newFlags, needsFlight: nf?.n ?? 0, done });
    }
    if (digestIsEmpty(digest)) continue;
    const mail = digestMail(now.toISOString().slice(0, 10), digest);
    for (const l of leads) if (await send("digest", org.id, l, mail, {}, conn)) sent++;
  }
  return sent;
}

/**
 * For the import job: e-mail the uploader that their file finished (status done) or failed.
 * Call it once the import row has its final status. Answers whether an e-mail went out.
 */
export async function notifyImportFinished(importId: string, conn: Db = db()): Promise<boolean> {
  const [imp] = await conn.select().from(imports).where(eq(imports.id, importId)).limit(1);
  if (!imp?.createdBy || (imp.status !== "done" && imp.status !== "failed")) return false;
  const [u] = await conn.select().from(users).where(eq(users.id, imp.createdBy)).limit(1);
  const [site] = await conn.select({ name: sites.name }).from(sites).where(eq(sites.id, imp.siteId)).limit(1);
  if (!u) return false;
  const ok = imp.status === "done";
  const mail = importMail({
    ok,
    fileName: imp.fileName,
    site: site?.name ?? "the site",
    rowsAccepted: imp.rowsAccepted,
    rowsRejected: imp.rowsRejected,
    error: imp.error,
    url: `${env().APP_URL}/sites/${imp.siteId}/data`,
  });
  return send(ok ? "import finished" : "import failed", imp.orgId, u, mail, { importId }, conn);
}

export const NOTIFICATION_QUEUES = { due: "notify-due", digest: "notify-digest" } as const;

/** Registers the handlers and, once the queue is up, their schedules (UTC cron). */
export function registerNotificationJobs(): void {
  registerHandler(NOTIFICATION_QUEUES.due, async () => {
    await runDueReminders();
  });
  registerHandler(NOTIFICATION_QUEUES.digest, async () => {
    await runDailyDigest();
  });
  void (async () => {
    const b = await boss();
    await b.createQueue(NOTIFICATION_QUEUES.due);
    await b.createQueue(NOTIFICATION_QUEUES.digest);
    // Hourly: each site gets its reminders in its own morning (see MORNING_HOUR).
    await b.schedule(NOTIFICATION_QUEUES.due, "5 * * * *");
    await b.schedule(NOTIFICATION_QUEUES.digest, "0 6 * * *");
  })().catch((e: unknown) => console.warn("notification schedules:", e instanceof Error ? e.message : e));
}
