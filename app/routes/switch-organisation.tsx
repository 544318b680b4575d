import { data, Form, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/switch-organisation";
import { createSession, organisationsOf, requireUser, revokeSession } from "~/services/session.server";

export const meta: Route.MetaFunction = () => [{ title: "Organisations · Sunsift" }];

/** A person in several organisations chooses which one to work in; the next sign-in lands there. */
export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requireUser(request);
  return { current: principal.orgId, organisations: await organisationsOf(principal.userId) };
}

const schema = z.object({ orgId: z.uuid("Choose an organisation") });

export async function action({ request }: Route.ActionArgs) {
  const principal = await requireUser(request);
  const parsed = schema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ errors: { orgId: parsed.error.issues[0]!.message } }, { status: 400 });
  const orgs = await organisationsOf(principal.userId);
  if (!orgs.some((o) => o.id === parsed.data.orgId)) throw data({ message: "Not found" }, { status: 404 });
  // A new session for the chosen organisation (a new cookie); the old one ends.
  const cookie = await createSession(request, principal.userId, parsed.data.orgId);
  await revokeSession(request);
  throw redirect("/", { headers: { "Set-Cookie": cookie } });
}

export default function SwitchOrganisation({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="max-w-xl space-y-6">
      <h1 className="h1">Organisations</h1>
      <p className="text-muted">You belong to {loaderData.organisations.length === 1 ? "one organisation" : `${loaderData.organisations.length} organisations`}. Choose the one to work in; you will land there next time you sign in.</p>
      <ul className="space-y-2">
        {loaderData.organisations.map((o) => (
          <li key={o.id} className="panel flex items-center justify-between gap-3">
            <span className="font-medium">{o.name}</span>
            {o.id === loaderData.current ? (
              <span className="text-sm text-muted" data-testid="current-org">Working here now</span>
            ) : (
              <Form method="post">
                <input type="hidden" name="orgId" value={o.id} />
                <button className="btn-secondary" type="submit">Switch to this one</button>
              </Form>
            )}
          </li>
        ))}
      </ul>
      {actionData?.errors?.orgId ? <p role="alert" className="field-error">{actionData.errors.orgId}</p> : null}
    </div>
  );
}
