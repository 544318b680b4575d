import { requireSite, requireTokenSite } from "./session.server";
import type { Permission, TokenScope } from "~/permissions";

/**
 * JSON routes used both by machine clients (Bearer token with a scope) and by the app's own
 * screens (session cookie with a role permission; no cookie → sent to sign-in like every screen).
 * Either way another organisation's site is 404.
 */
export async function requireSiteApi(request: Request, siteId: string | undefined, permission: Permission, scope: TokenScope) {
  if (request.headers.get("authorization")) {
    const { site } = await requireTokenSite(request, siteId, scope);
    return { site, userId: null as string | null };
  }
  const { site, principal } = await requireSite(request, siteId, permission);
  return { site, userId: principal.userId as string | null };
}
