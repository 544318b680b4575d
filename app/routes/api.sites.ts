import type { Route } from "./+types/api.sites";
import { requireToken } from "~/services/session.server";
import { siteSettingsSchema } from "~/domain/site-settings";
import { createSite } from "~/models/sites.server";
import { apiJson, apiError, createSiteResponse, siteSettingsError } from "~/lib/api-schemas";

/** POST /api/v1/sites — JSON of the site settings form; answers the new site's id. */
export async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return apiJson(apiError, { error: "Use POST" }, { status: 405 });
  const token = await requireToken(request, "write");
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return apiJson(apiError, { error: "The body is not valid JSON" }, { status: 400 });
  }
  const parsed = siteSettingsSchema.safeParse(body);
  if (!parsed.success)
    return apiJson(siteSettingsError, { error: "Invalid site settings", issues: parsed.error.issues.map((i) => ({ path: i.path.join("."), message: i.message })) }, { status: 400 });
  const site = await createSite({ orgId: token.orgId, userId: null }, parsed.data);
  return apiJson(createSiteResponse, { id: site.id }, { status: 201 });
}
