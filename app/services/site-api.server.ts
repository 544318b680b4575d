import { data } from "react-router";
import { forbidden, getPrincipal, loadSiteFor, requireTokenSite } from "./session.server";
import { can, type Permission, type TokenScope } from "~/permissions";

/**
 * JSON routes used both by machine clients (Bearer token with a scope) and by the app's own
 * screens (session cookie with a role permission). Neither a token nor a session answers 401 in
 * JSON, as the rest of the API does (not a redirect to the sign-in page). Either way another
 * organisation's site is 404.
 */
export async function requireSiteApi(request: Request, siteId: string | undefined, permission: Permission, scope: TokenScope) {
  if (request.headers.get("authorization")) {
    const { site } = await requireTokenSite(request, siteId, scope);
    return { site, userId: null as string | null };
  }
  const principal = await getPrincipal(request);
  if (!principal) throw data({ error: "Sign in, or send an API token: Authorization: Bearer <token>" }, { status: 401, headers: { "WWW-Authenticate": "Bearer" } });
  const site = await loadSiteFor(principal, siteId);
  if (!can(principal.roles, permission)) forbidden();
  return { site, userId: principal.userId as string | null };
}
