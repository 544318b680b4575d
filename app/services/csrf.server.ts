import { data, type MiddlewareFunction } from "react-router";
import { noStoreWhenSignedIn, securityHeaders } from "./security-headers.server";

const SAFE = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Refuse posts from other sites. Browsers send Origin (and Sec-Fetch-Site) on every POST. Only an
 * API request that carries `Authorization: Bearer …` passes unchecked: another site cannot make a
 * browser attach that header (it would need CORS, which the app does not grant). API requests that
 * sign in with the session cookie (the app's own screens) are checked like any form.
 */
export const csrfMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  if (!SAFE.has(request.method)) {
    const url = new URL(request.url);
    const bearer = /^Bearer\s+\S/i.test(request.headers.get("authorization") ?? "");
    if (!(bearer && url.pathname.startsWith("/api/"))) {
      const origin = request.headers.get("origin");
      const site = request.headers.get("sec-fetch-site");
      if (crossOrigin(origin, request.headers.get("host") ?? url.host) || site === "cross-site") {
        throw data({ message: "This form was sent from another site and was refused." }, { status: 403 });
      }
    }
  }
  return next();
};

/** Whether an Origin header names another site; one that is not an address at all is refused (400). */
function crossOrigin(origin: string | null, host: string): boolean {
  if (origin === null) return false;
  if (origin === "null") return true;
  let parsed: URL;
  try {
    parsed = new URL(origin);
  } catch {
    throw data({ message: "The request's Origin header is not a web address, so it was refused." }, { status: 400 });
  }
  return parsed.host !== host;
}

/** Resource routes (the API, CSV exports) skip entry.server: give their responses the same headers. */
export const securityHeadersMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  const res = await next();
  try {
    if (!res.headers.has("Content-Security-Policy")) securityHeaders(res.headers, request, null);
    noStoreWhenSignedIn(res.headers, request);
  } catch {
    // immutable headers (a proxied fetch response): leave them as they are
  }
  return res;
};
