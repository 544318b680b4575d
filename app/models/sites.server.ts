import { and, asc, eq, inArray } from "drizzle-orm";
import { db } from "~/db/client.server";
import { siteAccess, sites } from "~/db/schema";
import { ownerOnly, type Principal } from "~/services/session.server";

/** The sites a person may see: all of the organisation's, or for owners those granted to them. */
export async function listSitesFor(principal: Pick<Principal, "orgId" | "userId" | "roles">) {
  const base = db()
    .select({ id: sites.id, name: sites.name, timezone: sites.timezone, settings: sites.settings })
    .from(sites);
  if (ownerOnly(principal.roles)) {
    const granted = db().select({ id: siteAccess.siteId }).from(siteAccess).where(eq(siteAccess.userId, principal.userId));
    return base.where(and(eq(sites.orgId, principal.orgId), inArray(sites.id, granted))).orderBy(asc(sites.name));
  }
  return base.where(eq(sites.orgId, principal.orgId)).orderBy(asc(sites.name));
}
