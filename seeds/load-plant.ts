import { readFileSync } from "node:fs";
import { join } from "node:path";
import { eq } from "drizzle-orm";
import type { NodePgDatabase } from "drizzle-orm/node-postgres";
import * as schema from "../app/db/schema";
import { siteSettingsSchema } from "../app/domain/site-settings";
import { createSite } from "../app/models/sites.server";
import { importLayout } from "../app/models/layout.server";

/** Create the demo site from the generated site.json and import its layout through the product's path. */
export async function loadDemoSite(
  db: NodePgDatabase<typeof schema>,
  p: { orgId: string; adminUserId: string; ownerUserId: string; dir: string },
): Promise<{ siteId: string }> {
  const raw = JSON.parse(readFileSync(join(p.dir, "site.json"), "utf8")) as unknown;
  const settings = siteSettingsSchema.parse(raw);
  const site = await createSite({ orgId: p.orgId, userId: p.adminUserId }, settings);
  await db.insert(schema.siteAccess).values({ userId: p.ownerUserId, siteId: site.id }).onConflictDoNothing();
  const layout = await importLayout({ orgId: p.orgId, userId: p.adminUserId }, site.id, readFileSync(join(p.dir, "layout.csv"), "utf8"), { dryRun: false });
  if (!layout.ok) throw new Error(`demo layout refused: ${layout.errors.map((e) => `line ${e.line}: ${e.reason}`).join("; ")}`);
  return { siteId: site.id };
}

export async function demoSiteId(db: NodePgDatabase<typeof schema>, orgId: string): Promise<string | null> {
  const [s] = await db.select({ id: schema.sites.id }).from(schema.sites).where(eq(schema.sites.orgId, orgId)).limit(1);
  return s?.id ?? null;
}
