import nodemailer, { type Transporter } from "nodemailer";
import { and, eq, lt, sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { emails } from "~/db/schema";
import { env } from "~/env.server";

let transport: Transporter | undefined;

function mailer(): Transporter {
  if (!transport) {
    transport = nodemailer.createTransport({
      host: env().SMTP_HOST,
      port: env().SMTP_PORT,
      secure: false,
      ignoreTLS: true,
      connectionTimeout: 5000,
      greetingTimeout: 5000,
      socketTimeout: 10000,
    });
  }
  return transport;
}

/** Paths whose last part lets its holder in (an invitation, a password reset). */
const ACCESS_LINK = /\/(invite|reset-password)\/[A-Za-z0-9_-]+/g;

/**
 * A mail's text as someone other than its recipient may see it (the demo outbox): links that
 * grant access are masked, `…/invite/••••••`. Only the recipient's own "My e-mails" shows them.
 */
export function maskAccessLinks(text: string): string {
  return text.replace(ACCESS_LINK, "/$1/••••••");
}

export interface OutgoingEmail {
  orgId: string | null;
  kind: string;
  to: string;
  subject: string;
  text: string;
  meta?: Record<string, unknown>;
}

/**
 * Queue an e-mail and try to deliver it at once. A failed delivery stays queued and the
 * mail job retries it; the caller learns whether it went out now.
 */
export async function sendEmail(mail: OutgoingEmail): Promise<{ id: string; delivered: boolean; error?: string }> {
  const [row] = await db().insert(emails).values(mail).returning({ id: emails.id });
  const result = await deliver(row!.id);
  return { id: row!.id, ...result };
}

export async function deliver(id: string): Promise<{ delivered: boolean; error?: string }> {
  const [mail] = await db().select().from(emails).where(eq(emails.id, id)).limit(1);
  if (!mail || mail.status === "sent") return { delivered: true };
  try {
    await mailer().sendMail({ from: env().MAIL_FROM, to: mail.to, subject: mail.subject, text: mail.text });
    await db().update(emails).set({ status: "sent", sentAt: new Date(), attempts: mail.attempts + 1, lastError: null }).where(eq(emails.id, id));
    return { delivered: true };
  } catch (e) {
    const error = e instanceof Error ? e.message : String(e);
    const attempts = mail.attempts + 1;
    await db()
      .update(emails)
      .set({ attempts, lastError: error, status: attempts >= 10 ? "failed" : "queued" })
      .where(eq(emails.id, id));
    return { delivered: false, error };
  }
}

/** Retry what is still queued; called by the job runner. */
export async function retryQueuedEmails(limit = 50): Promise<number> {
  const queued = await db()
    .select({ id: emails.id })
    .from(emails)
    .where(and(eq(emails.status, "queued"), lt(emails.createdAt, sql`now() - interval '5 seconds'`)))
    .limit(limit);
  let sent = 0;
  for (const q of queued) if ((await deliver(q.id)).delivered) sent++;
  return sent;
}
