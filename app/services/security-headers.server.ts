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
