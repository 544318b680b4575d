import { desc, eq } from "drizzle-orm";
import type { Route } from "./+types/settings-outbox";
import { requirePermission, notFound } from "~/services/session.server";
import { db } from "~/db/client.server";
import { emails } from "~/db/schema";
import { env } from "~/env.server";
import { maskAccessLinks } from "~/services/mail.server";
import { SettingsTabs } from "~/components/settings-tabs";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Outbox · Settings · Sunsift" }];

const PAGE = 50;

export async function loader({ request }: Route.LoaderArgs) {
  // Only the demo (SUNSIFT_DEMO=1) has an outbox; anywhere else the page does not exist.
  if (env().SUNSIFT_DEMO !== "1") notFound("The outbox is shown only in the demo");
  const principal = await requirePermission(request, "outbox:view");
  const page = Math.max(1, Number(new URL(request.url).searchParams.get("page")) || 1);
  const rows = await db().select().from(emails).where(eq(emails.orgId, principal.orgId)).orderBy(desc(emails.createdAt)).limit(PAGE + 1).offset((page - 1) * PAGE);
  // Invitation and reset links are the recipient's alone: masked here, shown in their own "My e-mails".
  const shown = rows.slice(0, PAGE).map((m) => ({ ...m, text: maskAccessLinks(m.text) }));
  return { page, hasMore: rows.length > PAGE, emails: shown };
}

export default function Outbox({ loaderData }: Route.ComponentProps) {
  return (
    <div className="space-y-6">
      <h1 className="h1">Settings</h1>
      <SettingsTabs />
      <p className="text-muted">Every e-mail Sunsift sent for this organisation, as the demo's local mail server received it. Invitation and password links are hidden here: each person finds theirs under My e-mails.</p>
      {loaderData.emails.length === 0 ? <EmptyState title="No e-mails sent yet" /> : (
        <ul className="space-y-3">
          {loaderData.emails.map((m) => (
            <li key={m.id} className="panel" data-testid="outbox-mail">
              <details>
                <summary className="cursor-pointer">
                  <span className="font-semibold">{m.subject}</span> <span className="text-muted">to {m.to} · {new Date(m.createdAt).toISOString().slice(0, 16).replace("T", " ")} UTC · {m.status}{m.lastError ? ` (${m.lastError})` : ""}</span>
                </summary>
                <pre className="mt-3 whitespace-pre-wrap font-sans text-sm">{m.text}</pre>
              </details>
            </li>
          ))}
        </ul>
      )}
      <div className="flex gap-3">
        {loaderData.page > 1 ? <a className="btn-secondary" href={`?page=${loaderData.page - 1}`}>Newer</a> : null}
        {loaderData.hasMore ? <a className="btn-secondary" href={`?page=${loaderData.page + 1}`}>Older</a> : null}
      </div>
    </div>
  );
}
