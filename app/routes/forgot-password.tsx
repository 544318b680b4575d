import { data, Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/forgot-password";
import { AuthCard } from "~/components/auth-card";
import { requestPasswordReset } from "~/services/account-links.server";

export const meta: Route.MetaFunction = () => [{ title: "Reset password · Sunsift" }];

export async function action({ request }: Route.ActionArgs) {
  const parsed = z.object({ email: z.email("Enter a valid e-mail address") }).safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ sent: false, error: parsed.error.issues[0]!.message }, { status: 400 });
  await requestPasswordReset(request, parsed.data.email);
  return { sent: true, error: null };
}

export default function ForgotPassword({ actionData }: Route.ComponentProps) {
  return (
    <AuthCard title="Reset your password">
      {actionData?.sent ? (
        <p role="status">If that address has an account, a reset link is on its way. It works once, for 30 minutes.</p>
      ) : (
        <Form method="post" className="space-y-4">
          <div>
            <label className="label" htmlFor="email">E-mail</label>
            <input className="input" id="email" name="email" type="email" required autoFocus />
            {actionData?.error ? <p className="field-error">{actionData.error}</p> : null}
          </div>
          <button className="btn w-full justify-center" type="submit">Send reset link</button>
        </Form>
      )}
      <p className="text-sm"><Link className="text-brand underline" to="/login">Back to sign-in</Link></p>
    </AuthCard>
  );
}
