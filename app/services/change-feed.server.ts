/**
 * The web process's view cache, kept honest by PostgreSQL itself.
 *
 * Writes to the tables behind the screens run a statement trigger (drizzle/0006_change_feed.sql)
 * that moves a sequence at once and sends a NOTIFY at commit: `sunsift_data` for plant, analysis,
 * flag, flight and work-order tables, `sunsift_auth` for sessions, users, memberships and tokens.
 * A cached value is served only while both still match the ones it was computed under:
 *  - each GET request reads the two sequences once (one round trip, only if it uses the cache),
 *    so a request that starts after a write has committed never sees the older value;
 *  - the NOTIFY, heard on one dedicated LISTEN connection, also drops what a request computed
 *    while a write was still in flight (the sequence had moved, the data had not yet).
 * Nothing is cached while that connection is down (PostgreSQL restarting, not yet connected),
 * outside a web request (jobs, scripts, tests calling models) or for a request that writes.
 */
import { AsyncLocalStorage } from "node:async_hooks";
import pg from "pg";
import type { MiddlewareFunction } from "react-router";
import { pool } from "~/db/client.server";
import { env } from "~/env.server";

type Scope = "data" | "auth";
interface Versions { data: string; auth: string }
interface Entry { key: string; at: number; value: Promise<unknown> }
interface Page { key: string; at: number; nonce: string; body: string }

const MAX_ENTRIES = 2_000;
const MAX_PAGE_BYTES = 64 * 1024 * 1024;
/** Even without a change, an entry is recomputed after this long (a safety net only). */
const MAX_AGE_MS = 5 * 60_000;

interface Feed {
  client: pg.Client | null;
  live: boolean;
  connecting: boolean;
  retryAt: number;
  /** Bumped by every notification and every (re)connection: part of every entry's version. */
  heard: Record<Scope, number>;
  entries: Map<string, Entry>;
  pages: Map<string, Page>;
  pageBytes: number;
}
declare global {
  var __sunsiftFeed: Feed | undefined;
}
function feed(): Feed {
  globalThis.__sunsiftFeed ??= { client: null, live: false, connecting: false, retryAt: 0, heard: { data: 1, auth: 1 }, entries: new Map(), pages: new Map(), pageBytes: 0 };
  return globalThis.__sunsiftFeed;
}

function forget(f: Feed) {
  f.heard.data++;
  f.heard.auth++;
  f.entries.clear();
  f.pages.clear();
  f.pageBytes = 0;
}

function drop(f: Feed, client: pg.Client) {
  if (f.client !== client) return;
  f.client = null;
  f.live = false;
  f.connecting = false;
  f.retryAt = Date.now() + 1_000;
  forget(f);
  client.end().catch(() => undefined);
}

/** Opens the listening connection in the background; requests never wait for it. */
function ensureListening(f: Feed) {
  if (f.live || f.connecting || Date.now() < f.retryAt) return;
  f.connecting = true;
  const client = new pg.Client({ connectionString: env().DATABASE_URL });
  f.client = client;
  client.on("error", () => drop(f, client));
  client.on("end", () => drop(f, client));
  client.on("notification", (m) => {
    if (m.channel === "sunsift_auth") f.heard.auth++;
    else f.heard.data++;
  });
  client
    .connect()
    .then(() => client.query("LISTEN sunsift_data; LISTEN sunsift_auth"))
    .then(() => {
      if (f.client !== client) return;
      // A listener must not keep a stopping server alive (the pool lets go of idle clients too).
      (client as unknown as { connection?: { stream?: { unref?: () => void } } }).connection?.stream?.unref?.();
      forget(f); // anything computed before we were listening may have missed a change
      f.live = true;
      f.connecting = false;
    })
    .catch(() => drop(f, client));
}

interface RequestState { versions: Promise<Versions> | null }
const requestState = new AsyncLocalStorage<RequestState>();

function versionsOf(state: RequestState): Promise<Versions> {
  state.versions ??= pool()
    .query<{ d: string; a: string }>("select (select last_value from sunsift_data_changes)::text d, (select last_value from sunsift_auth_changes)::text a")
    .then((r) => ({ data: r.rows[0]!.d, auth: r.rows[0]!.a }));
  return state.versions;
}

function versionKey(f: Feed, v: Versions, scope: Scope | "both") {
  if (scope === "data") return `d${v.data}.${f.heard.data}`;
  if (scope === "auth") return `a${v.auth}.${f.heard.auth}`;
  return `d${v.data}.${f.heard.data}a${v.auth}.${f.heard.auth}`;
}

/**
 * The value of `compute()` for `key`, shared by every GET request until a change of `scope` is
 * recorded. Concurrent requests for a missing key share one computation. The key must hold
 * everything the value depends on besides those tables (site settings, query, local day).
 * Callers must not modify the value.
 */
export async function cached<T>(key: string, compute: () => Promise<T>, scope: Scope | "keyed" = "data"): Promise<T> {
  const state = requestState.getStore();
  const f = feed();
  if (!state) return compute();
  ensureListening(f);
  if (!f.live) return compute();
  // "keyed": the key itself names every change the value depends on (built from other cached
  // values); only the listener's reconnection (which empties the cache) or the age limit drops it.
  const v = scope === "keyed" ? "keyed" : versionKey(f, await versionsOf(state), scope);
  const now = Date.now();
  const hit = f.entries.get(key);
  if (hit && hit.key === v && now - hit.at < MAX_AGE_MS) return hit.value as Promise<T>;
  const value = compute();
  f.entries.delete(key);
  f.entries.set(key, { key: v, at: now, value });
  value.catch(() => {
    if (f.entries.get(key)?.value === value) f.entries.delete(key);
  });
  if (f.entries.size > MAX_ENTRIES) {
    for (const k of f.entries.keys()) {
      f.entries.delete(k); // oldest first: a Map iterates in insertion order
      if (f.entries.size <= MAX_ENTRIES * 0.9) break;
    }
  }
  return value;
}

/** Root middleware: GET requests may use the cache; a request that writes never does. */
export const changeFeedMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  if (request.method !== "GET") return next();
  return requestState.run({ versions: null }, () => next());
};

function storePage(f: Feed, key: string, page: Page) {
  const old = f.pages.get(key);
  if (old) f.pageBytes -= old.body.length;
  f.pages.delete(key);
  f.pages.set(key, page);
  f.pageBytes += page.body.length;
  for (const [k, p] of f.pages) {
    if (f.pageBytes <= MAX_PAGE_BYTES) break;
    f.pages.delete(k);
    f.pageBytes -= p.body.length;
  }
}

/**
 * The whole HTML of the screens people open most (site overview, flags, fly list; chosen in
 * entry.server.tsx), kept per address and session cookie until any change of data or access is
 * recorded, like the views it is made of. Only documents: a client-side navigation's data is
 * rebuilt from the cached views each time. Returns the kept HTML and the script nonce it holds.
 */
export async function keptPage(request: Request): Promise<{ body: string; nonce: string } | null> {
  const slot = await pageSlot(request);
  const hit = slot && slot.f.pages.get(slot.key);
  if (!slot || !hit || hit.key !== slot.version || Date.now() - hit.at >= MAX_AGE_MS) return null;
  return { body: hit.body, nonce: hit.nonce };
}

/** Keeps a freshly rendered page (see keptPage) under the versions its request started with. */
export async function keepPage(request: Request, body: string, nonce: string): Promise<void> {
  const slot = await pageSlot(request);
  if (slot && body.length <= MAX_PAGE_BYTES / 16) storePage(slot.f, slot.key, { key: slot.version, at: Date.now(), nonce, body });
}

/** Where a GET request's page is kept (address and session cookie), and the versions it is valid for. */
async function pageSlot(request: Request) {
  const state = requestState.getStore();
  const f = feed();
  const cookie = request.headers.get("cookie");
  if (!state || request.method !== "GET" || !cookie || !f.live) return null;
  return { f, key: `${request.url}\n${cookie}`, version: versionKey(f, await versionsOf(state), "both") };
}
