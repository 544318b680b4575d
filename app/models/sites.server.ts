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

import { siteSettingsSchema, type SiteSettings } from "~/domain/site-settings";
import { audit } from "~/services/audit.server";

export async function createSite(principal: { orgId: string; userId: string | null }, settings: SiteSettings) {
  const [site] = await db()
    .insert(sites)
    .values({ orgId: principal.orgId, name: settings.name, latitude: settings.latitude, longitude: settings.longitude, timezone: settings.timezone, settings })
    .returning();
  await audit({ orgId: principal.orgId, userId: principal.userId, action: "site.create", entity: "site", entityId: site!.id, detail: { name: settings.name } });
  return site!;
}

/** The caller must have loaded the site through requireSite (organisation scope checked there). */
export async function updateSite(principal: Pick<Principal, "orgId" | "userId">, siteId: string, settings: SiteSettings) {
  const parsed = siteSettingsSchema.parse(settings);
  await db()
    .update(sites)
    .set({ name: parsed.name, latitude: parsed.latitude, longitude: parsed.longitude, timezone: parsed.timezone, settings: parsed, updatedAt: new Date() })
    .where(and(eq(sites.id, siteId), eq(sites.orgId, principal.orgId)));
  await audit({ orgId: principal.orgId, userId: principal.userId, action: "site.settings", entity: "site", entityId: siteId });
}
