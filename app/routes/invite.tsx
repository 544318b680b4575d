import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/invite";
import { AuthCard } from "~/components/auth-card";
import { acceptInvitation, findValidInvitation } from "~/services/account-links.server";
import { createSession } from "~/services/session.server";
import { passwordSchema } from "~/lib/validation";

export async function loader({ params }: Route.LoaderArgs) {
  const inv = await findValidInvitation(params.token);
  return inv ? { valid: true as const, email: inv.email, name: inv.name } : { valid: false as const };
}

export async function action({ request, params }: Route.ActionArgs) {
  const form = Object.fromEntries(await request.formData());
  const parsed = z.object({ password: passwordSchema }).safeParse(form);
  if (!parsed.success) return data({ error: parsed.error.issues[0]!.message }, { status: 400 });
  const accepted = await acceptInvitation(params.token, parsed.data.password);
  if (!accepted) return data({ error: "This invitation has expired or was already used." }, { status: 400 });
  throw redirect("/", { headers: { "Set-Cookie": await createSession(request, accepted.userId, accepted.orgId) } });
}

export default function Invite({ loaderData, actionData }: Route.ComponentProps) {
  if (!loaderData.valid)
    return (
      <AuthCard title="Invitation expired">
        <p>This invitation has expired or was already used. Ask your administrator for a new one.</p>
        <Link className="text-brand underline" to="/login">Sign in</Link>
      </AuthCard>
    );
  return (
    <AuthCard title={`Welcome, ${loaderData.name}`}>
      <p className="text-sm text-muted">Choose a password for {loaderData.email}.</p>
      <Form method="post" className="space-y-4">
        <div>
          <label className="label" htmlFor="password">Password</label>
          <input className="input" id="password" name="password" type="password" autoComplete="new-password" minLength={10} required />
        </div>
        {actionData?.error ? <p role="alert" className="field-error">{actionData.error}</p> : null}
        <button className="btn w-full justify-center" type="submit">Join</button>
      </Form>
    </AuthCard>
  );
}
