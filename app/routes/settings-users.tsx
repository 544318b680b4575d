import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/settings-users";
import { requirePermission } from "~/services/session.server";
import { listMembers, listPendingInvitations, orgName, revokeInvitation, setActive, setRoles } from "~/models/users.server";
import { createInvitation } from "~/services/account-links.server";
import { SettingsTabs } from "~/components/settings-tabs";
import { ROLE_LABELS, ROLES, isRole, type Role } from "~/permissions";
import { fieldErrors } from "~/lib/validation";

export const meta: Route.MetaFunction = () => [{ title: "Users · Settings · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requirePermission(request, "settings:users");
  const [members, invitations] = await Promise.all([listMembers(principal), listPendingInvitations(principal)]);
  return { me: principal.userId, members, invitations };
}

const rolesField = z.array(z.string()).transform((a) => a.filter(isRole)).refine((a) => a.length > 0, "Choose at least one role");

export async function action({ request }: Route.ActionArgs) {
  const principal = await requirePermission(request, "settings:users");
  const form = await request.formData();
  const intent = form.get("intent");
  if (intent === "invite") {
    const parsed = z
      .object({ name: z.string().trim().min(1, "Enter a name").max(120), email: z.email("Enter a valid e-mail address"), roles: rolesField })
      .safeParse({ name: form.get("name"), email: form.get("email"), roles: form.getAll("roles") });
    if (!parsed.success) return data({ intent, errors: fieldErrors(parsed.error), message: null }, { status: 400 });
    const members = await listMembers(principal);
    if (members.some((m) => m.email.toLowerCase() === parsed.data.email.toLowerCase()))
      return data({ intent, errors: { email: "This person is already a member" }, message: null }, { status: 400 });
    const res = await createInvitation({ orgId: principal.orgId, invitedBy: principal.userId, email: parsed.data.email, name: parsed.data.name, roles: parsed.data.roles as Role[], orgName: await orgName(principal.orgId) });
    return { intent, errors: {}, message: res.delivered ? `Invitation sent to ${parsed.data.email}.` : `Invitation saved, but the mail server did not answer (${res.error}). It will be retried.` };
  }
  const userId = z.uuid().safeParse(form.get("userId"));
  if (intent === "roles" && userId.success) {
    const roles = rolesField.safeParse(form.getAll("roles"));
    if (!roles.success) return data({ intent, errors: { roles: roles.error.issues[0]!.message }, message: null }, { status: 400 });
    await setRoles(principal, userId.data, roles.data as Role[]);
    return { intent, errors: {}, message: "Roles saved." };
  }
  if ((intent === "deactivate" || intent === "reactivate") && userId.success) {
    await setActive(principal, userId.data, intent === "reactivate");
    return { intent, errors: {}, message: intent === "deactivate" ? "User deactivated; their sessions ended." : "User reactivated." };
  }
  if (intent === "revoke-invitation") {
    const id = z.uuid().safeParse(form.get("invitationId"));
    if (id.success) await revokeInvitation(principal, id.data);
    return { intent, errors: {}, message: "Invitation withdrawn." };
  }
  return data({ intent, errors: { _form: "Unknown request" }, message: null }, { status: 400 });
}

function RoleBoxes({ selected, idPrefix }: { selected: readonly string[]; idPrefix: string }) {
  return (
    <div className="flex flex-wrap gap-x-4 gap-y-1">
      {ROLES.map((r) => (
        <label key={r} className="flex items-center gap-1 text-sm" htmlFor={`${idPrefix}-${r}`}>
          <input type="checkbox" id={`${idPrefix}-${r}`} name="roles" value={r} defaultChecked={selected.includes(r)} />
          {ROLE_LABELS[r]}
        </label>
      ))}
    </div>
  );
}

export default function SettingsUsers({ loaderData, actionData }: Route.ComponentProps) {
  const nav = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  return (
    <div className="space-y-6">
      <h1 className="h1">Settings</h1>
      <SettingsTabs />
      {actionData?.message ? <p role="status" className="rounded-md bg-green-50 p-3 text-ok">{actionData.message}</p> : null}
      <section className="panel space-y-3">
        <h2 className="h2">Invite a person</h2>
        <Form method="post" className="grid gap-3 md:grid-cols-2">
          <input type="hidden" name="intent" value="invite" />
          <div>
            <label className="label" htmlFor="name">Name</label>
            <input className="input" id="name" name="name" required />
            {actionData?.intent === "invite" && errors.name ? <p className="field-error">{errors.name}</p> : null}
          </div>
          <div>
            <label className="label" htmlFor="email">E-mail</label>
            <input className="input" id="email" name="email" type="email" required />
            {actionData?.intent === "invite" && errors.email ? <p className="field-error">{errors.email}</p> : null}
          </div>
          <div className="md:col-span-2">
            <span className="label">Roles</span>
            <RoleBoxes selected={[]} idPrefix="invite" />
            {actionData?.intent === "invite" && errors.roles ? <p className="field-error">{errors.roles}</p> : null}
          </div>
          <div><button className="btn" type="submit" disabled={nav.state !== "idle"}>Send invitation</button></div>
        </Form>
      </section>
      <section className="panel overflow-x-auto">
        <h2 className="h2 mb-3">People</h2>
        <table className="table">
          <thead><tr><th>Name</th><th>E-mail</th><th>Roles</th><th>Status</th><th></th></tr></thead>
          <tbody>
            {loaderData.members.map((m) => (
              <tr key={m.userId}>
                <td className="font-medium">{m.name}</td>
                <td>{m.email}</td>
                <td>
                  <Form method="post" className="space-y-1">
                    <input type="hidden" name="intent" value="roles" />
                    <input type="hidden" name="userId" value={m.userId} />
                    <RoleBoxes selected={m.roles} idPrefix={m.userId} />
                    <button className="text-sm text-brand underline" type="submit">Save roles</button>
                  </Form>
                </td>
                <td>{m.active ? <span className="text-ok">Active</span> : <span className="text-bad">Deactivated</span>}</td>
                <td>
                  {m.userId !== loaderData.me ? (
                    <Form method="post">
                      <input type="hidden" name="userId" value={m.userId} />
                      <button className={m.active ? "btn-danger" : "btn-secondary"} name="intent" value={m.active ? "deactivate" : "reactivate"} type="submit">
                        {m.active ? "Deactivate" : "Reactivate"}
                      </button>
                    </Form>
                  ) : <span className="text-sm text-muted">You</span>}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
      <section className="panel">
        <h2 className="h2 mb-3">Pending invitations</h2>
        {loaderData.invitations.length === 0 ? <p className="text-muted">None.</p> : (
          <ul className="divide-y divide-line">
            {loaderData.invitations.map((i) => (
              <li key={i.id} className="flex items-center justify-between py-2">
                <span>{i.name} &lt;{i.email}&gt; · {i.roles.map((r) => (isRole(r) ? ROLE_LABELS[r] : r)).join(", ")} · expires {new Date(i.expiresAt).toISOString().slice(0, 10)}</span>
                <Form method="post"><input type="hidden" name="invitationId" value={i.id} /><button className="btn-secondary" name="intent" value="revoke-invitation">Withdraw</button></Form>
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
