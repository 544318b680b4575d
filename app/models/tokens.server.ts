import { and, desc, eq, isNull } from "drizzle-orm";
import { db } from "~/db/client.server";
import { apiTokens } from "~/db/schema";
import type { Principal } from "~/services/session.server";
import { newToken, sha256 } from "~/services/password.server";
import { audit } from "~/services/audit.server";
import type { TokenScope } from "~/permissions";

export async function listTokens(principal: Principal) {
  return db()
    .select({ id: apiTokens.id, name: apiTokens.name, prefix: apiTokens.prefix, scopes: apiTokens.scopes, createdAt: apiTokens.createdAt, lastUsedAt: apiTokens.lastUsedAt, revokedAt: apiTokens.revokedAt })
    .from(apiTokens)
    .where(eq(apiTokens.orgId, principal.orgId))
    .orderBy(desc(apiTokens.createdAt));
}

/** The token itself is returned once and never stored: only its hash is. */
export async function createToken(principal: Principal, name: string, scopes: TokenScope[]): Promise<string> {
  const token = newToken("ss_");
  const [row] = await db()
    .insert(apiTokens)
    .values({ orgId: principal.orgId, name, tokenHash: sha256(token), prefix: token.slice(0, 7), scopes, createdBy: principal.userId })
    .returning({ id: apiTokens.id });
  await audit({ orgId: principal.orgId, userId: principal.userId, action: "token.create", entity: "api_token", entityId: row!.id, detail: { name, scopes } });
  return token;
}

export async function revokeToken(principal: Principal, id: string): Promise<boolean> {
  const rows = await db()
    .update(apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.id, id), eq(apiTokens.orgId, principal.orgId), isNull(apiTokens.revokedAt)))
    .returning({ id: apiTokens.id });
  if (rows.length) await audit({ orgId: principal.orgId, userId: principal.userId, action: "token.revoke", entity: "api_token", entityId: id });
  return rows.length > 0;
}
