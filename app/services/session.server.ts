import { SignJWT, jwtVerify } from "jose";
import { and, eq, isNull, gt, sql } from "drizzle-orm";
import { data, redirect } from "react-router";
import { db } from "~/db/client.server";
import { memberships, organisations, sessions, users, sites, siteAccess, apiTokens } from "~/db/schema";
import { cached, validUntil } from "./change-feed.server";
import { env } from "~/env.server";
import { can, isRole, scopeAllows, type Permission, type Role, type TokenScope } from "~/permissions";
import { sha256 } from "./password.server";
import { clientAddress, requestIsHttps } from "./forwarded.server";

const COOKIE = "sunsift_session";
const MAX_AGE_S = 60 * 60 * 24 * 14;

export interface Principal {
  userId: string;
  orgId: string;
  sessionId: string;
  email: string;
  name: string;
  roles: Role[];
}

function secret(): Uint8Array {
  return new TextEncoder().encode(env().SESSION_SECRET);
}

export function sessionCookie(request: Request, value: string, maxAge: number): string {
  const parts = [`${COOKIE}=${value}`, "Path=/", "HttpOnly", "SameSite=Lax", `Max-Age=${maxAge}`];
  if (requestIsHttps(request)) parts.push("Secure");
  return parts.join("; ");
}

export async function createSession(request: Request, userId: string, orgId: string): Promise<string> {
  const expiresAt = new Date(Date.now() + MAX_AGE_S * 1000);
  const [row] = await db()
    .insert(sessions)
    .values({
      userId,
      orgId,
      expiresAt,
      ip: clientAddress(request),
      userAgent: request.headers.get("user-agent")?.slice(0, 300) ?? null,
    })
    .returning({ id: sessions.id });
  // The next sign-in lands in the organisation used last (sign-in.server.ts landingOrg).
  await db().update(memberships).set({ lastUsedAt: new Date() }).where(and(eq(memberships.userId, userId), eq(memberships.orgId, orgId)));
  const jwt = await new SignJWT({ sid: row!.id })
    .setProtectedHeader({ alg: "HS256" })
    .setIssuedAt()
    .setExpirationTime(expiresAt)
    .sign(secret());
  return sessionCookie(request, jwt, MAX_AGE_S);
}

function readCookie(request: Request): string | null {
  const header = request.headers.get("cookie");
  if (!header) return null;
  for (const part of header.split(/;\s*/)) {
    const eqAt = part.indexOf("=");
    if (eqAt > 0 && part.slice(0, eqAt) === COOKIE) return part.slice(eqAt + 1);
  }
  return null;
}

/**
 * Cookies whose signature was already checked, with their session id and expiry: the same bytes
 * verify the same way, so each cookie is verified once per process, not on every request.
 */
const verifiedCookies = new Map<string, { sid: string; exp: number }>();

async function sessionIdFromRequest(request: Request): Promise<string | null> {
  const token = readCookie(request);
  if (!token) return null;
  const known = verifiedCookies.get(token);
  if (known) return known.exp > Date.now() / 1000 ? known.sid : null;
  try {
    const { payload } = await jwtVerify(token, secret(), { algorithms: ["HS256"] });
    if (typeof payload.sid !== "string") return null;
    if (verifiedCookies.size >= 10_000) verifiedCookies.clear();
    verifiedCookies.set(token, { sid: payload.sid, exp: payload.exp ?? Infinity });
    return payload.sid;
  } catch {
    return null;
  }
}

/** The signed-in person, or null. The session row decides: sign-out and deactivation act at once. */
export async function getPrincipal(request: Request): Promise<Principal | null> {
  // The layout's and the page's loaders of one request share one answer.
  let p = principalOfRequest.get(request);
  if (!p) {
    p = principalFromSession(request);
    principalOfRequest.set(request, p);
  }
  return p;
}

const principalOfRequest = new WeakMap<Request, Promise<Principal | null>>();

async function principalFromSession(request: Request): Promise<Principal | null> {
  const sid = await sessionIdFromRequest(request);
  if (!sid) return null;
  // Cached until a session, user or membership changes anywhere (see change-feed.server.ts).
  const row = await cached(`principal:${sid}`, () => sessionRow(sid), "auth");
  if (!row || row.expiresAt.getTime() <= Date.now()) return null;
  validUntil(row.expiresAt.getTime()); // a page kept for this session must not outlive it
  const { expiresAt: _expiresAt, ...rest } = row;
  return { ...rest, roles: rest.roles.filter(isRole) };
}

async function sessionRow(sid: string) {
  const rows = await db()
    .select({
      sessionId: sessions.id,
      userId: users.id,
      orgId: sessions.orgId,
      email: users.email,
      name: users.name,
      roles: memberships.roles,
      expiresAt: sessions.expiresAt,
    })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .innerJoin(memberships, and(eq(memberships.userId, sessions.userId), eq(memberships.orgId, sessions.orgId)))
    .where(and(eq(sessions.id, sid), isNull(sessions.revokedAt), gt(sessions.expiresAt, sql`now()`), eq(memberships.active, true)))
    .limit(1);
  return rows[0] ?? null;
}

export async function requireUser(request: Request): Promise<Principal> {
  const principal = await getPrincipal(request);
  if (!principal) {
    const url = new URL(request.url);
    const next = url.pathname + url.search;
    throw redirect(`/login?next=${encodeURIComponent(next)}`);
  }
  return principal;
}

export function forbidden(message = "Your role does not allow this."): never {
  throw data({ message }, { status: 403 });
}

export function notFound(message = "Not found"): never {
  throw data({ message }, { status: 404 });
}

export async function requirePermission(request: Request, permission: Permission): Promise<Principal> {
  const principal = await requireUser(request);
  if (!can(principal.roles, permission)) forbidden();
  return principal;
}

/**
 * The site, if the caller's organisation owns it and (for owner-only people) they were given it.
 * Anything else answers 404, so ids cannot be probed across organisations.
 */
export async function requireSite(request: Request, siteId: string | undefined, permission: Permission) {
  const principal = await requireUser(request);
  const site = await loadSiteFor(principal, siteId);
  if (!can(principal.roles, permission)) forbidden();
  return { principal, site };
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export async function loadSiteFor(principal: Pick<Principal, "orgId" | "userId" | "roles">, siteId: string | undefined) {
  if (!siteId || !UUID.test(siteId)) notFound("No such site");
  const id = siteId;
  const site = await cached(`site:${id}:${principal.orgId}`, async () => {
    const [row] = await db().select().from(sites).where(and(eq(sites.id, id), eq(sites.orgId, principal.orgId))).limit(1);
    return row ?? null;
  });
  if (!site) notFound("No such site");
  if (ownerOnly(principal.roles)) {
    const granted = await cached(`site-access:${id}:${principal.userId}`, async () => {
      const [access] = await db()
        .select()
        .from(siteAccess)
        .where(and(eq(siteAccess.userId, principal.userId), eq(siteAccess.siteId, id)))
        .limit(1);
      return !!access;
    }, "auth");
    if (!granted) notFound("No such site");
  }
  return site;
}

export function ownerOnly(roles: readonly Role[]): boolean {
  return roles.length > 0 && roles.every((r) => r === "owner");
}

export async function revokeSession(request: Request): Promise<void> {
  const sid = await sessionIdFromRequest(request);
  if (sid) await db().update(sessions).set({ revokedAt: new Date() }).where(eq(sessions.id, sid));
}

/** Ends every session of this person, in every organisation (after their password changed). */
export async function revokeAllSessions(userId: string, conn: Pick<ReturnType<typeof db>, "update"> = db()): Promise<void> {
  await conn.update(sessions).set({ revokedAt: new Date() }).where(and(eq(sessions.userId, userId), isNull(sessions.revokedAt)));
}

/** The organisations this person is an active member of, for the "switch organisation" choice. */
export async function organisationsOf(userId: string): Promise<{ id: string; name: string }[]> {
  return cached(`orgs-of:${userId}`, () =>
    db()
      .select({ id: organisations.id, name: organisations.name })
      .from(memberships)
      .innerJoin(organisations, eq(organisations.id, memberships.orgId))
      .where(and(eq(memberships.userId, userId), eq(memberships.active, true)))
      .orderBy(organisations.name, organisations.id),
  "auth");
}

export function clearSessionCookie(request: Request): string {
  return sessionCookie(request, "", 0);
}

export { clientAddress };

export interface TokenPrincipal {
  tokenId: string;
  orgId: string;
  scopes: string[];
}

/** Bearer API tokens: stored hashed, revocable; another organisation's data answers 404. */
export async function requireToken(request: Request, scope: TokenScope): Promise<TokenPrincipal> {
  const auth = request.headers.get("authorization") ?? "";
  const m = /^Bearer\s+(\S+)$/i.exec(auth);
  if (!m) throw data({ error: "Missing Bearer token" }, { status: 401, headers: { "WWW-Authenticate": "Bearer" } });
  const hash = sha256(m[1]!);
  // Cached until any token, session or membership changes (see change-feed.server.ts).
  const tok = await cached(`token:${hash}`, async () => {
    const [row] = await db()
      .select()
      .from(apiTokens)
      .where(and(eq(apiTokens.tokenHash, hash), isNull(apiTokens.revokedAt)))
      .limit(1);
    return row ?? null;
  }, "auth");
  if (!tok) throw data({ error: "Invalid or revoked token" }, { status: 401, headers: { "WWW-Authenticate": "Bearer" } });
  if (!scopeAllows(tok.scopes, scope)) throw data({ error: `This token lacks the '${scope}' scope` }, { status: 403 });
  await noteTokenUse(tok.id);
  return { tokenId: tok.id, orgId: tok.orgId, scopes: tok.scopes };
}

const tokenUseWritten = new Map<string, number>();
/** "Last used" to the minute: one write per token per minute, not one per request. */
async function noteTokenUse(tokenId: string) {
  const now = Date.now();
  if (now - (tokenUseWritten.get(tokenId) ?? 0) < 60_000) return;
  tokenUseWritten.set(tokenId, now);
  if (tokenUseWritten.size > 10_000) tokenUseWritten.clear();
  await db().update(apiTokens).set({ lastUsedAt: new Date(now) }).where(eq(apiTokens.id, tokenId));
}

export async function requireTokenSite(request: Request, siteId: string | undefined, scope: TokenScope) {
  const token = await requireToken(request, scope);
  if (!siteId || !UUID.test(siteId)) throw data({ error: "No such site" }, { status: 404 });
  const id = siteId;
  const site = await cached(`site:${id}:${token.orgId}`, async () => {
    const [row] = await db().select().from(sites).where(and(eq(sites.id, id), eq(sites.orgId, token.orgId))).limit(1);
    return row ?? null;
  });
  if (!site) throw data({ error: "No such site" }, { status: 404 });
  return { token, site };
}

const isNotFound = (e: unknown) =>
  (e instanceof Response && e.status === 404) || (typeof e === "object" && e !== null && (e as { init?: { status?: number } }).init?.status === 404);

/**
 * requireSite for resource routes (CSV, JSON for the browser), which have no error page: an
 * unknown or foreign site answers a plain-text 404 like the screens' "Page not found".
 */
export async function requireSiteResource(request: Request, siteId: string | undefined, permission: Permission) {
  return requireSite(request, siteId, permission).catch((e: unknown) => {
    if (isNotFound(e)) throw new Response("Page not found", { status: 404, headers: { "Content-Type": "text/plain" } });
    throw e;
  });
}
