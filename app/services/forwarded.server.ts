import { env } from "~/env.server";

/**
 * What the request says about the client and the connection. X-Forwarded-* are the client's to
 * write, so they are believed only behind a proxy of ours (TRUST_PROXY=1); scripts/serve.mjs also
 * strips them otherwise and leaves one X-Forwarded-For entry: the socket's address, or the
 * right-most entry, the one our proxy appended.
 */
export function requestIsHttps(request: { url: string; headers?: Headers }): boolean {
  if (new URL(request.url).protocol === "https:") return true;
  if (env().TRUST_PROXY !== "1" || !request.headers) return false;
  const proto = request.headers.get("x-forwarded-proto");
  // A chain of proxies writes "https, http": the right-most is the hop next to us.
  return proto?.split(",").at(-1)?.trim().toLowerCase() === "https";
}

/** The client's address for the sign-in limits: the right-most X-Forwarded-For entry (see above). */
export function clientAddress(request: Request): string {
  return request.headers.get("x-forwarded-for")?.split(",").at(-1)?.trim() || "local";
}
