/**
 * The web process's view cache, kept honest by PostgreSQL itself.
 *
 * Writes to the tables behind the screens run a statement trigger (drizzle/0006_change_feed.sql)
 * that moves a sequence at once and sends a NOTIFY at commit: `sunsift_data` for plant, analysis,
 * flag, flight and work-order tables, `sunsift_auth` for sessions, users, memberships and tokens.
 * A cached value is served only while both still match the ones it was computed under:
 *  - each GET request that uses the cache reads the two sequences by a query that starts after it
 *    arrived (requests arriving together share one), so a request that starts after a write has
 *    committed never sees the older value;
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
import { securityHeaders } from "./security-headers.server";

type Scope = "data" | "auth";
interface Versions { data: string; auth: string }
interface Entry { key: string; at: number; value: Promise<unknown> }
interface Answer { key: string; at: number; until: number; status: number; headers: [string, string][]; body: string; nonce: string | null }

const MAX_ENTRIES = 2_000;
const MAX_ANSWER_BYTES = 64 * 1024 * 1024;
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
  answers: Map<string, Answer>;
  answerBytes: number;
}
declare global {
  var __sunsiftFeed: Feed | undefined;
}
function feed(): Feed {
  globalThis.__sunsiftFeed ??= { client: null, live: false, connecting: false, retryAt: 0, heard: { data: 1, auth: 1 }, entries: new Map(), answers: new Map(), answerBytes: 0 };
  return globalThis.__sunsiftFeed;
}

function forget(f: Feed) {
  f.heard.data++;
  f.heard.auth++;
  f.entries.clear();
  f.answers.clear();
  f.answerBytes = 0;
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

interface RequestState { versions: Promise<Versions> | null; until: number }
const requestState = new AsyncLocalStorage<RequestState>();

function versionsOf(state: RequestState): Promise<Versions> {
  state.versions ??= freshVersions();
  return state.versions;
}

let reading: Promise<unknown> | null = null;
let nextRead: Promise<Versions> | null = null;

/**
 * The two change counters, read by a query that starts after this call: requests that arrive
 * while a read is under way share the next one, so under load there is one read per round trip,
 * not one per request, and none of them can miss a write that committed before it arrived.
 */
function freshVersions(): Promise<Versions> {
  nextRead ??= Promise.resolve(reading)
    .catch(() => undefined)
    .then(() => {
      const read = pool()
        .query<{ d: string; a: string }>("select (select last_value from sunsift_data_changes)::text d, (select last_value from sunsift_auth_changes)::text a")
        .then((r) => ({ data: r.rows[0]!.d, auth: r.rows[0]!.a }));
      nextRead = null;
      reading = read;
      return read;
    });
  return nextRead;
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
  return requestState.run({ versions: null, until: Infinity }, () => next());
};

function storeAnswer(f: Feed, key: string, answer: Answer) {
  const old = f.answers.get(key);
  if (old) f.answerBytes -= old.body.length;
  f.answers.delete(key);
  f.answers.set(key, answer);
  f.answerBytes += answer.body.length;
  for (const [k, a] of f.answers) {
    if (f.answerBytes <= MAX_ANSWER_BYTES) break;
    f.answers.delete(k);
    f.answerBytes -= a.body.length;
  }
}

/** What a kept answer needs to be sent again: the security headers are set afresh each time. */
export interface KeptAnswer { status: number; headers: Headers; body: string }

/**
 * Whole answers to the GET requests people make most (the site overview, flags and fly list
 * pages, chosen in entry.server.tsx, and the combiner chart series), kept per address and session
 * cookie until any change of data or access is recorded — like the views they are made of — or
 * the session they were made for expires. Only documents and JSON routes: a client-side
 * navigation's data is rebuilt from the cached views each time.
 *
 * The production server (scripts/serve.mjs) looks here before React Router does, so a kept
 * answer costs one (shared) read of the change counters; it is the same lookup either way.
 */
export async function keptAnswer(
  method: string,
  url: string,
  auth: { cookie: string | null | undefined; authorization: string | null | undefined },
  nonce: string | null,
): Promise<KeptAnswer | null> {
  const f = feed();
  const cookie = auth.cookie;
  if (method !== "GET" || !cookie || auth.authorization || !f.live) return null;
  const key = answerKey(url, cookie);
  if (!f.answers.has(key)) return null; // nothing kept: no need to read the counters
  const version = versionKey(f, await freshVersions(), "both");
  const hit = f.answers.get(key);
  const now = Date.now();
  if (!hit || hit.key !== version || now - hit.at >= MAX_AGE_MS || now >= hit.until) return null;
  const headers = new Headers(hit.headers);
  securityHeaders(headers, { url }, hit.nonce ? nonce : null);
  headers.set("Server-Timing", 'kept-answer;desc="hit"');
  const body = hit.nonce && nonce ? hit.body.replaceAll(`nonce="${hit.nonce}"`, `nonce="${nonce}"`) : hit.body;
  return { status: hit.status, headers, body };
}

/**
 * Keeps an answer made by a GET request under the versions the request started with, until the
 * earliest expiry of what the request relied on (the session). `nonce` is the script nonce an
 * HTML body holds, replaced by a fresh one each time it is sent again.
 */
export async function keepAnswer(request: Request, status: number, headers: Headers, body: string, nonce: string | null): Promise<void> {
  const state = requestState.getStore();
  const f = feed();
  const cookie = request.headers.get("cookie");
  if (!state || request.method !== "GET" || !cookie || request.headers.has("authorization") || !f.live || headers.has("Set-Cookie") || body.length > MAX_ANSWER_BYTES / 16) return;
  const version = versionKey(f, await versionsOf(state), "both");
  const kept = [...headers].filter(([name]) => !SET_AFRESH.has(name.toLowerCase()));
  storeAnswer(f, answerKey(request.url, cookie), { key: version, at: Date.now(), until: state.until, status, headers: kept, body, nonce });
}

/** Set by securityHeaders on every answer, kept or not. */
const SET_AFRESH = new Set(["server-timing", "content-security-policy", "strict-transport-security", "x-content-type-options", "referrer-policy", "x-frame-options"]);

/** The path and query (the host does not change an answer) and the session cookie. */
function answerKey(url: string, cookie: string) {
  const u = new URL(url, "http://localhost");
  return `${u.pathname}${u.search}\n${cookie}`;
}

/** A request relies on something that stops being valid at `ms` (a session's expiry). */
export function validUntil(ms: number): void {
  const state = requestState.getStore();
  if (state && ms < state.until) state.until = ms;
}
