import { data, redirect } from "react-router";
import type { Route } from "./+types/site-new";
import { requirePermission } from "~/services/session.server";
import { createSite } from "~/models/sites.server";
import { siteSettingsSchema } from "~/domain/site-settings";
import { SiteSettingsForm } from "~/components/site-settings-form";
import { nestForm } from "~/lib/form";
import { fieldErrors } from "~/lib/validation";

export const meta: Route.MetaFunction = () => [{ title: "New site · Sunsift" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requirePermission(request, "site:edit");
  return null;
}

export async function action({ request }: Route.ActionArgs) {
  const principal = await requirePermission(request, "site:edit");
  const input = nestForm(await request.formData());
  const parsed = siteSettingsSchema.safeParse(input);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), input }, { status: 400 });
  const site = await createSite(principal, parsed.data);
  throw redirect(`/sites/${site.id}/layout`);
}

export default function SiteNew({ actionData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <h1 className="h1">New site</h1>
      <SiteSettingsForm initial={(actionData?.input ?? {}) as never} errors={actionData?.errors ?? {}} warnings={{}} submitLabel="Create site" />
    </div>
  );
}
