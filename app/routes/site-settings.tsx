import { data } from "react-router";
import type { Route } from "./+types/site-settings";
import { requireSite } from "~/services/session.server";
import { updateSite } from "~/models/sites.server";
import { moduleWarnings, siteSettingsSchema } from "~/domain/site-settings";
import { SiteSettingsForm } from "~/components/site-settings-form";
import { nestForm } from "~/lib/form";
import { fieldErrors } from "~/lib/validation";

export const meta: Route.MetaFunction = () => [{ title: "Site settings · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "site:edit");
  const warnings = Object.fromEntries(moduleWarnings(site.settings.module).map((w) => [w.field, w.message]));
  return { site: { id: site.id, name: site.name }, settings: site.settings, warnings };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { principal, site } = await requireSite(request, params.siteId, "site:edit");
  const input = nestForm(await request.formData());
  const parsed = siteSettingsSchema.safeParse(input);
  if (!parsed.success) return data({ ok: false, errors: fieldErrors(parsed.error), warnings: {}, input }, { status: 400 });
  await updateSite(principal, site.id, parsed.data);
  const warnings = Object.fromEntries(moduleWarnings(parsed.data.module).map((w) => [w.field, w.message]));
  return { ok: true, errors: {}, warnings, input: parsed.data };
}

export default function SiteSettings({ loaderData, actionData }: Route.ComponentProps) {
  const initial = (actionData?.input ?? loaderData.settings) as never;
  return (
    <div className="space-y-4">
      <h1 className="h1">Site settings <span className="text-muted">· {loaderData.site.name}</span></h1>
      {actionData?.ok ? <p role="status" className="rounded-md bg-green-50 p-3 text-ok">Settings saved.{Object.keys(actionData.warnings).length ? " Check the warnings below." : ""}</p> : null}
      {actionData && !actionData.ok ? <p role="alert" className="rounded-md bg-red-50 p-3 text-bad">Some values need fixing: see the messages beside the fields.</p> : null}
      <SiteSettingsForm key={actionData?.ok ? "saved" : "edit"} initial={initial} errors={actionData?.errors ?? {}} warnings={actionData?.warnings ?? loaderData.warnings} submitLabel="Save settings" />
    </div>
  );
}
