/**
 * Where to send someone after a step that takes a `next` address from the request (the sign-in
 * page's `?next=`): only somewhere on this app. `next` is resolved the way a browser would, against
 * the app's own origin (so `/\evil.example`, `//evil`, `/\t/evil`, `https://evil` and `javascript:`
 * all name another origin or none), and refused unless the origin is the app's; only the path,
 * query and fragment are kept. A path that would itself start with `//` is refused too.
 */
export function sameOriginPath(next: string | null | undefined, appOrigin: string, fallback = "/"): string {
  if (!next) return fallback;
  let url: URL;
  try {
    url = new URL(next, appOrigin);
  } catch {
    return fallback;
  }
  if (url.origin !== new URL(appOrigin).origin) return fallback;
  const path = url.pathname + url.search + url.hash;
  return path.startsWith("/") && !path.startsWith("//") && !path.startsWith("/\\") ? path : fallback;
}
