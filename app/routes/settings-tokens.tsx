import { data, Form } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/settings-tokens";
import { requirePermission } from "~/services/session.server";
import { createToken, listTokens, revokeToken } from "~/models/tokens.server";
import { SettingsTabs } from "~/components/settings-tabs";
import { TOKEN_SCOPES, type TokenScope } from "~/permissions";

export const meta: Route.MetaFunction = () => [{ title: "API tokens · Settings · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requirePermission(request, "settings:tokens");
  return { tokens: await listTokens(principal) };
}

export async function action({ request }: Route.ActionArgs) {
  const principal = await requirePermission(request, "settings:tokens");
  const form = await request.formData();
  if (form.get("intent") === "revoke") {
    const id = z.uuid().safeParse(form.get("id"));
    if (!id.success || !(await revokeToken(principal, id.data))) return data({ error: "No such active token", token: null }, { status: 404 });
    return { error: null, token: null };
  }
  const parsed = z
    .object({ name: z.string().trim().min(1, "Name the token after the machine that uses it").max(80), scope: z.enum(TOKEN_SCOPES, { error: "Choose a scope" }) })
    .safeParse({ name: form.get("name"), scope: form.get("scope") });
  if (!parsed.success) return data({ error: parsed.error.issues[0]!.message, token: null }, { status: 400 });
  const token = await createToken(principal, parsed.data.name, [parsed.data.scope as TokenScope]);
  return { error: null, token };
}

export default function SettingsTokens({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="space-y-6">
      <h1 className="h1">Settings</h1>
      <SettingsTabs />
      {actionData?.token ? (
        <div role="status" className="panel border-sun">
          <p className="font-semibold">Copy this token now. It will not be shown again.</p>
          <code className="mt-2 block break-all rounded bg-paper p-3 text-base" data-testid="new-token">{actionData.token}</code>
        </div>
      ) : null}
      <section className="panel">
        <h2 className="h2 mb-3">Create an API token</h2>
        <Form method="post" className="flex flex-wrap items-end gap-3">
          <div>
            <label className="label" htmlFor="name">Name</label>
            <input className="input" id="name" name="name" placeholder="SCADA exporter" required />
          </div>
          <div>
            <label className="label" htmlFor="scope">Scope</label>
            <select className="input" id="scope" name="scope" defaultValue="read">
              <option value="read">read — reports and flags</option>
              <option value="write">write — also upload layouts and readings</option>
              <option value="admin">admin — everything</option>
            </select>
          </div>
          <button className="btn" type="submit">Create token</button>
        </Form>
        {actionData?.error ? <p className="field-error">{actionData.error}</p> : null}
      </section>
      <section className="panel overflow-x-auto">
        <h2 className="h2 mb-3">Tokens</h2>
        {loaderData.tokens.length === 0 ? <p className="text-muted">No tokens yet.</p> : (
          <table className="table">
            <thead><tr><th>Name</th><th>Starts with</th><th>Scopes</th><th>Created</th><th>Last used</th><th></th></tr></thead>
            <tbody>
              {loaderData.tokens.map((t) => (
                <tr key={t.id}>
                  <td className="font-medium">{t.name}</td>
                  <td><code>{t.prefix}…</code></td>
                  <td>{t.scopes.join(", ")}</td>
                  <td>{new Date(t.createdAt).toISOString().slice(0, 10)}</td>
                  <td>{t.lastUsedAt ? new Date(t.lastUsedAt).toISOString().slice(0, 16).replace("T", " ") : "never"}</td>
                  <td>
                    {t.revokedAt ? <span className="text-muted">revoked</span> : (
                      <Form method="post"><input type="hidden" name="id" value={t.id} /><button className="btn-danger" name="intent" value="revoke">Revoke</button></Form>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
