import type { Route } from "./+types/api.sites";
import { requireToken } from "~/services/session.server";
import { siteSettingsSchema } from "~/domain/site-settings";
import { createSite } from "~/models/sites.server";

/** POST /api/v1/sites — JSON of the site settings form; answers the new site's id. */
export async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return Response.json({ error: "Use POST" }, { status: 405 });
  const token = await requireToken(request, "write");
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return Response.json({ error: "The body is not valid JSON" }, { status: 400 });
  }
  const parsed = siteSettingsSchema.safeParse(body);
  if (!parsed.success)
    return Response.json({ error: "Invalid site settings", issues: parsed.error.issues.map((i) => ({ path: i.path.join("."), message: i.message })) }, { status: 400 });
  const site = await createSite({ orgId: token.orgId, userId: null }, parsed.data);
  return Response.json({ id: site.id }, { status: 201 });
}
