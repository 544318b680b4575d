import { Form, useNavigation } from "react-router";
import { desc, eq, sql } from "drizzle-orm";
import type { Route } from "./+types/settings-notifications";
import { requireUser } from "~/services/session.server";
import { db } from "~/db/client.server";
import { emails, notificationPrefs } from "~/db/schema";
import { env } from "~/env.server";
import { DEFAULT_PREFS, PREF_KEYS, PREF_LABELS, type Prefs } from "~/domain/notifications";
import { SettingsTabs } from "~/components/settings-tabs";
import { audit } from "~/services/audit.server";

export const meta: Route.MetaFunction = () => [{ title: "E-mail notifications · Settings · Sunsift" }];

// Every signed-in person chooses their own e-mails; nothing here touches anyone else.
export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requireUser(request);
  const [row] = await db().select().from(notificationPrefs).where(eq(notificationPrefs.userId, principal.userId)).limit(1);
  const prefs: Prefs = row ? { assignment: row.assignment, due: row.due, digest: row.digest, imports: row.imports } : DEFAULT_PREFS;
  // The demo has no real mailbox: each person reads the mails sent to their own address here, links
  // included (the admins' outbox masks those). Outside the demo, mail goes to the mailbox only.
  const received =
    env().SUNSIFT_DEMO === "1"
      ? await db()
          .select({ id: emails.id, subject: emails.subject, text: emails.text, createdAt: emails.createdAt })
          .from(emails)
          .where(sql`lower(${emails.to}) = ${principal.email.toLowerCase()}`)
          .orderBy(desc(emails.createdAt))
          .limit(20)
      : null;
  return { prefs, email: principal.email, isAdmin: principal.roles.includes("admin"), received };
}

export async function action({ request }: Route.ActionArgs) {
  const principal = await requireUser(request);
  const form = await request.formData();
  const prefs = Object.fromEntries(PREF_KEYS.map((k) => [k, form.get(k) === "on"])) as Prefs;
  await db()
    .insert(notificationPrefs)
    .values({ userId: principal.userId, ...prefs })
    .onConflictDoUpdate({ target: notificationPrefs.userId, set: { ...prefs, updatedAt: new Date() } });
  await audit({ orgId: principal.orgId, userId: principal.userId, action: "notifications.update", entity: "user", entityId: principal.userId, detail: prefs });
  return { saved: true };
}

export default function Screen({ loaderData, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state !== "idle";
  return (
    <div className="space-y-6">
      <h1 className="h1">Settings</h1>
      {loaderData.isAdmin ? <SettingsTabs /> : null}
      <Form method="post" className="panel max-w-2xl space-y-4">
        <h2 className="h2">E-mails I get</h2>
        <p className="text-sm text-muted">Sent to {loaderData.email}.</p>
        {PREF_KEYS.map((k) => (
          <label key={k} className="flex cursor-pointer items-start gap-3">
            <input type="checkbox" name={k} defaultChecked={loaderData.prefs[k]} className="mt-1 h-5 w-5" />
            <span>
              <span className="block font-medium">{PREF_LABELS[k].label}</span>
              <span className="block text-sm text-muted">{PREF_LABELS[k].hint}</span>
            </span>
          </label>
        ))}
        <div className="flex items-center gap-3">
          <button className="btn" type="submit" disabled={busy}>Save</button>
          {actionData?.saved && !busy ? <span className="text-ok" role="status">Saved.</span> : null}
        </div>
      </Form>
      {loaderData.received ? (
        <section className="panel max-w-2xl space-y-3">
          <h2 className="h2">E-mails sent to me (demo)</h2>
          {loaderData.received.length === 0 ? <p className="text-sm text-muted">None yet.</p> : (
            <ul className="space-y-3">
              {loaderData.received.map((m) => (
                <li key={m.id} data-testid="my-mail">
                  <details>
                    <summary className="cursor-pointer"><span className="font-semibold">{m.subject}</span> <span className="text-muted">{new Date(m.createdAt).toISOString().slice(0, 16).replace("T", " ")} UTC</span></summary>
                    <pre className="mt-3 whitespace-pre-wrap font-sans text-sm">{m.text}</pre>
                  </details>
                </li>
              ))}
            </ul>
          )}
        </section>
      ) : null}
    </div>
  );
}
