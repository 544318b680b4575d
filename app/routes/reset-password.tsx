import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/reset-password";
import { AuthCard } from "~/components/auth-card";
import { passwordSchema } from "~/lib/validation";
import { completePasswordReset, findValidReset } from "~/services/account-links.server";



export async function loader({ params }: Route.LoaderArgs) {
  return { valid: (await findValidReset(params.token)) !== null };
}

export async function action({ request, params }: Route.ActionArgs) {
  const form = Object.fromEntries(await request.formData());
  const parsed = z.object({ password: passwordSchema, confirm: z.string() }).refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ" }).safeParse(form);
  if (!parsed.success) return data({ error: parsed.error.issues[0]!.message }, { status: 400 });
  if (!(await completePasswordReset(params.token, parsed.data.password)))
    return data({ error: "This link has expired or was already used. Ask for a new one." }, { status: 400 });
  throw redirect("/login?reset=1");
}

export default function ResetPassword({ loaderData, actionData }: Route.ComponentProps) {
  if (!loaderData.valid)
    return (
      <AuthCard title="Link expired">
        <p>This reset link has expired or was already used.</p>
        <Link className="btn" to="/forgot-password">Ask for a new link</Link>
      </AuthCard>
    );
  return (
    <AuthCard title="Choose a new password">
      <Form method="post" className="space-y-4">
        <div>
          <label className="label" htmlFor="password">New password</label>
          <input className="input" id="password" name="password" type="password" autoComplete="new-password" minLength={10} required />
        </div>
        <div>
          <label className="label" htmlFor="confirm">Repeat it</label>
          <input className="input" id="confirm" name="confirm" type="password" autoComplete="new-password" required />
        </div>
        {actionData?.error ? <p role="alert" className="field-error">{actionData.error}</p> : null}
        <button className="btn w-full justify-center" type="submit">Save password</button>
      </Form>
    </AuthCard>
  );
}
