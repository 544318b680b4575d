import { data, type MiddlewareFunction } from "react-router";
import { securityHeaders } from "./security-headers.server";

const SAFE = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Refuse form posts from other sites. Browsers send Origin (and Sec-Fetch-Site) on every POST;
 * API routes authenticate with a Bearer header that another site cannot attach, so they pass.
 */
export const csrfMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  if (!SAFE.has(request.method)) {
    const url = new URL(request.url);
    if (!url.pathname.startsWith("/api/")) {
      const origin = request.headers.get("origin");
      const site = request.headers.get("sec-fetch-site");
      const crossOrigin = origin !== null && origin !== "null" ? new URL(origin).host !== (request.headers.get("host") ?? url.host) : origin === "null";
      if (crossOrigin || site === "cross-site") {
        throw data({ message: "This form was sent from another site and was refused." }, { status: 403 });
      }
    }
  }
  return next();
};

/** Resource routes (the API, CSV exports) skip entry.server: give their responses the same headers. */
export const securityHeadersMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  const res = await next();
  if (!res.headers.has("Content-Security-Policy")) {
    try {
      securityHeaders(res.headers, request, null);
    } catch {
      // immutable headers (a proxied fetch response): leave them as they are
    }
  }
  return res;
};
