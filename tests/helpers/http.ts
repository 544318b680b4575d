/** A tiny HTTP client for the running test app: cookies, same-origin posts, no redirects followed. */
export const BASE = process.env.APP_URL ?? "http://127.0.0.1:3100";
export const DEMO_PASSWORD = "sunsift-demo";

let ipCounter = 1;
/** Each test signs in from its own address, so the per-address rate limit of one cannot spill into another. */
export function freshIp(): string {
  ipCounter++;
  return `10.${(process.pid >> 8) & 255}.${process.pid & 255}.${ipCounter % 250}`;
}

export interface Res {
  status: number;
  location: string | null;
  body: string;
  headers: Headers;
  json<T = unknown>(): T;
}

export async function http(
  path: string,
  opts: { method?: string; cookie?: string | null; form?: Record<string, string | string[]>; headers?: Record<string, string>; body?: BodyInit; origin?: string | null } = {},
): Promise<Res> {
  const headers: Record<string, string> = { ...opts.headers };
  if (opts.cookie) headers.cookie = opts.cookie;
  let body: BodyInit | undefined = opts.body;
  if (opts.form) {
    const p = new URLSearchParams();
    for (const [k, v] of Object.entries(opts.form)) for (const one of Array.isArray(v) ? v : [v]) p.append(k, one);
    body = p;
  }
  const method = opts.method ?? (body ? "POST" : "GET");
  if (method !== "GET" && opts.origin !== null) headers.origin = opts.origin ?? BASE;
  const res = await fetch(BASE + path, { method, headers, body, redirect: "manual" });
  // React separates adjacent text with <!-- --> in server HTML; drop it so tests read plain text.
  const text = (await res.text()).replace(/<!-- -->/g, "");
  return {
    status: res.status,
    location: res.headers.get("location"),
    body: text,
    headers: res.headers,
    json<T>() {
      return JSON.parse(text) as T;
    },
  };
}

export async function signIn(email: string, password = DEMO_PASSWORD, ip = freshIp()): Promise<{ cookie: string | null; res: Res }> {
  const res = await http("/login", { form: { email, password }, headers: { "x-forwarded-for": ip } });
  const set = res.headers.get("set-cookie");
  const cookie = set ? set.split(";")[0]! : null;
  return { cookie: cookie && !cookie.endsWith("=") ? cookie : null, res };
}

/** Route data (loader) as JSON-ish status: the `.data` endpoint answers status codes without HTML. */
export async function loaderStatus(path: string, cookie: string | null): Promise<{ status: number; location: string | null }> {
  const res = await http(path, { cookie });
  return { status: res.status, location: res.location };
}

/** A nested settings object as the flat, dotted form fields a settings page posts (`module.pmp`, `list[]`). */
export function flatForm(o: Record<string, unknown>, prefix = ""): Record<string, string | string[]> {
  const out: Record<string, string | string[]> = {};
  for (const [k, v] of Object.entries(o)) {
    if (Array.isArray(v)) out[`${prefix}${k}[]`] = v.map(String);
    else if (v && typeof v === "object") Object.assign(out, flatForm(v as Record<string, unknown>, `${prefix}${k}.`));
    else if (v !== undefined) out[prefix + k] = String(v);
  }
  return out;
}

/** The text of a server-rendered page as the user reads it (HTML entities decoded). */
export const visible = (html: string) => html.replace(/&quot;/g, '"').replace(/&#x27;/g, "'").replace(/&lt;/g, "<").replace(/&gt;/g, ">").replace(/&amp;/g, "&");
