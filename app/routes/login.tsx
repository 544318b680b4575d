import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/login";
import { Logo } from "~/components/logo";
import { getPrincipal } from "~/services/session.server";
import { signIn } from "~/services/sign-in.server";
import { sameOriginPath } from "~/lib/safe-redirect";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  if (await getPrincipal(request)) throw redirect("/");
  // Read on the server, so the first HTML already carries them (not only once the script runs).
  const url = new URL(request.url);
  return { reset: url.searchParams.get("reset") === "1", next: url.searchParams.get("next") ?? "" };
}

const schema = z.object({
  email: z.string().trim().min(1, "Enter your e-mail address").max(254),
  password: z.string().min(1, "Enter your password").max(1024),
  next: z.string().optional(),
});

export async function action({ request }: Route.ActionArgs) {
  const form = Object.fromEntries(await request.formData());
  const parsed = schema.safeParse(form);
  if (!parsed.success) {
    return data({ error: parsed.error.issues[0]?.message ?? "Check the form" }, { status: 400 });
  }
  const result = await signIn(request, parsed.data.email, parsed.data.password);
  if (!result.ok) return data({ error: result.message }, { status: result.status });
  // Only a page of this app: `/\evil.example` and the like name another site to a browser.
  const next = sameOriginPath(parsed.data.next, new URL(request.url).origin);
  throw redirect(next, { headers: { "Set-Cookie": result.cookie } });
}

export default function Login({ loaderData, actionData }: Route.ComponentProps) {
  const nav = useNavigation();
  const { reset, next } = loaderData;
  return (
    <main className="flex min-h-screen items-center justify-center p-6">
      <div className="w-full max-w-sm">
        <div className="mb-6 flex items-center gap-3">
          <Logo className="h-10 w-10" />
          <div>
            <p className="text-2xl font-semibold">Sunsift</p>
            <p className="text-sm text-muted">From combiner data to the string to check</p>
          </div>
        </div>
        <Form method="post" className="panel space-y-4">
          <h1 className="h2">Sign in</h1>
          {reset && !actionData?.error ? <p role="status" className="rounded-md bg-green-50 p-3 text-sm text-ok">Your password was changed. Sign in with the new one.</p> : null}
          <input type="hidden" name="next" value={next} />
          <div>
            <label className="label" htmlFor="email">E-mail</label>
            <input className="input" id="email" name="email" type="email" autoComplete="username" required autoFocus />
          </div>
          <div>
            <label className="label" htmlFor="password">Password</label>
            <input className="input" id="password" name="password" type="password" autoComplete="current-password" required />
          </div>
          {actionData?.error ? <p role="alert" className="rounded-md bg-red-50 p-3 text-sm text-bad">{actionData.error}</p> : null}
          <button className="btn w-full justify-center" type="submit" disabled={nav.state !== "idle"}>
            {nav.state !== "idle" ? "Signing in…" : "Sign in"}
          </button>
          <p className="text-center text-sm"><Link className="text-brand underline" to="/forgot-password">Forgot your password?</Link></p>
        </Form>
      </div>
    </main>
  );
}
