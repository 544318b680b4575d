import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/invite";
import { AuthCard } from "~/components/auth-card";
import { acceptInvitation, accountFor, findValidInvitation } from "~/services/account-links.server";
import { createSession, getPrincipal } from "~/services/session.server";
import { checkPassword } from "~/services/sign-in.server";
import { orgName } from "~/models/users.server";
import { passwordSchema } from "~/lib/validation";

export const meta: Route.MetaFunction = () => [{ title: "Invitation · Sunsift" }];

/**
 * Someone new chooses a password here. Someone who already has an account joins by proving it is
 * theirs (signed in as that person, or that account's current password): an invitation never
 * changes an existing account.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  const inv = await findValidInvitation(params.token);
  if (!inv) return { valid: false as const };
  const [account, principal, org] = await Promise.all([accountFor(inv.email), getPrincipal(request), orgName(inv.orgId)]);
  return {
    valid: true as const,
    email: inv.email,
    name: inv.name,
    org,
    hasAccount: !!account,
    signedInAsInvitee: !!account && principal?.userId === account.id,
  };
}

const EXPIRED = "This invitation has expired or was already used.";

export async function action({ request, params }: Route.ActionArgs) {
  const form = Object.fromEntries(await request.formData());
  const inv = await findValidInvitation(params.token);
  if (!inv) return data({ error: EXPIRED }, { status: 400 });
  const account = await accountFor(inv.email);
  let accepted: Awaited<ReturnType<typeof acceptInvitation>>;
  if (account) {
    const principal = await getPrincipal(request);
    if (principal?.userId !== account.id) {
      const parsed = z.object({ password: z.string().min(1, "Enter the current password of your Sunsift account").max(1024) }).safeParse(form);
      if (!parsed.success) return data({ error: parsed.error.issues[0]!.message }, { status: 400 });
      // The sign-in's own check and limits: the invitation link is no way around them.
      const checked = await checkPassword(request, inv.email, parsed.data.password);
      if (!checked.ok)
        return data({ error: checked.status === 429 ? checked.message : "That is not the current password of this account. Use the password you sign in with." }, { status: checked.status === 429 ? 429 : 400 });
    }
    accepted = await acceptInvitation(params.token, { kind: "existing", userId: account.id });
  } else {
    const parsed = z.object({ password: passwordSchema }).safeParse(form);
    if (!parsed.success) return data({ error: parsed.error.issues[0]!.message }, { status: 400 });
    accepted = await acceptInvitation(params.token, { kind: "new", password: parsed.data.password });
  }
  if (accepted === "exists") return data({ error: "This address already has a Sunsift account. Reload the page and join with that account's password." }, { status: 400 });
  if (!accepted) return data({ error: EXPIRED }, { status: 400 });
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
  const error = actionData?.error ? <p role="alert" className="field-error">{actionData.error}</p> : null;
  if (loaderData.signedInAsInvitee)
    return (
      <AuthCard title={`Join ${loaderData.org}`}>
        <p className="text-sm text-muted">You are signed in as {loaderData.email}. Joining adds {loaderData.org} to your account; your password stays as it is.</p>
        <Form method="post" className="space-y-4">
          {error}
          <button className="btn w-full justify-center" type="submit">Join {loaderData.org}</button>
        </Form>
      </AuthCard>
    );
  if (loaderData.hasAccount)
    return (
      <AuthCard title={`Join ${loaderData.org}`}>
        <p className="text-sm text-muted" data-testid="existing-account">
          {loaderData.email} already has a Sunsift account. Enter its current password to add {loaderData.org} to it. Your password stays as it is.
        </p>
        <Form method="post" className="space-y-4">
          <div>
            <label className="label" htmlFor="password">Your current password</label>
            <input className="input" id="password" name="password" type="password" autoComplete="current-password" required />
          </div>
          {error}
          <button className="btn w-full justify-center" type="submit">Join</button>
          <p className="text-center text-sm"><Link className="text-brand underline" to="/forgot-password">Forgot your password?</Link></p>
        </Form>
      </AuthCard>
    );
  return (
    <AuthCard title={`Welcome, ${loaderData.name}`}>
      <p className="text-sm text-muted">Choose a password for {loaderData.email} to join {loaderData.org}.</p>
      <Form method="post" className="space-y-4">
        <div>
          <label className="label" htmlFor="password">Password</label>
          <input className="input" id="password" name="password" type="password" autoComplete="new-password" minLength={10} required />
        </div>
        {error}
        <button className="btn w-full justify-center" type="submit">Join</button>
      </Form>
    </AuthCard>
  );
}
