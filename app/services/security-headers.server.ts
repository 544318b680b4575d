import { env } from "~/env.server";
import { requestIsHttps } from "./forwarded.server";

/** Headers on every page: only our own origin (and the local object store for uploads). */
export function securityHeaders(headers: Headers, request: { url: string; headers?: Headers }, nonce: string | null): void {
  const store = new URL(env().S3_PUBLIC_ENDPOINT ?? env().S3_ENDPOINT).origin;
  const script = nonce ? `'self' 'nonce-${nonce}'` : "'self'";
  const csp = [
    "default-src 'self'",
    `script-src ${script}`,
    "style-src 'self' 'unsafe-inline'",
    `img-src 'self' data: blob: ${store}`,
    `connect-src 'self' ${store}`,
    "font-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join("; ");
  headers.set("Content-Security-Policy", csp);
  headers.set("X-Content-Type-Options", "nosniff");
  headers.set("Referrer-Policy", "strict-origin-when-cross-origin");
  headers.set("X-Frame-Options", "DENY");
  // Over TLS (directly, or behind a proxy of ours that says so): browsers keep to https from then on.
  if (requestIsHttps(request)) headers.set("Strict-Transport-Security", "max-age=31536000");
}

/**
 * Answers for a signed-in person (a session cookie, or an API token) are not stored by browsers or
 * proxies: `Cache-Control: no-store`, unless the route chose its own (private) caching.
 */
export function noStoreWhenSignedIn(headers: Headers, request: Pick<Request, "headers">): void {
  if (headers.has("Cache-Control")) return;
  const cookie = request.headers.get("cookie") ?? "";
  if (/(^|;\s*)sunsift_session=[^;]/.test(cookie) || request.headers.has("authorization") || headers.has("Set-Cookie")) headers.set("Cache-Control", "no-store");
}
