import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { createOrg, db, SAMPLE_SETTINGS } from "../helpers/db";
import { http, signIn, flatForm } from "../helpers/http";
import * as schema from "../../app/db/schema";

describe("site settings form", () => {
  it("creates a site, then refuses bad values with messages beside the fields and changes nothing", async () => {
    const { people, password, org } = await createOrg("Settings");
    const { cookie } = await signIn(people.engineer.email, password);
    const created = await http("/sites/new", { cookie, form: flatForm({ ...SAMPLE_SETTINGS, name: "Llano Verde" }) });
    expect(created.status).toBe(302);
    const siteId = /\/sites\/([0-9a-f-]{36})\/layout/.exec(created.location!)![1]!;
    const [row] = await db.select().from(schema.sites).where(eq(schema.sites.id, siteId));
    expect(row!.orgId).toBe(org.id);
    expect(row!.settings.thresholds.robustZ).toBe(-3.5); // default applied
    expect(row!.settings.thresholds.flagDaysN).toBe(3);

    const bad = await http(`/sites/${siteId}/settings`, {
      cookie,
      form: flatForm({ ...SAMPLE_SETTINGS, latitude: 123, timezone: "Mars/Olympus", currency: "euro", module: { ...SAMPLE_SETTINGS.module, pmp: "abc" } }),
    });
    expect(bad.status).toBe(400);
    expect(bad.body).toContain("Latitude is between −90 and 90");
    expect(bad.body).toContain("Unknown time zone");
    expect(bad.body).toContain("Currency is a three-letter code");
    expect(bad.body).toContain("Pmp must be a number");
    const [after] = await db.select().from(schema.sites).where(eq(schema.sites.id, siteId));
    expect(after!.settings).toEqual(row!.settings);
  });

  it("warns, but saves, a temperature coefficient outside the c-Si range", async () => {
    const { people, password, site } = await createOrg("Warn");
    const { cookie } = await signIn(people.admin.email, password);
    const r = await http(`/sites/${site.id}/settings`, { cookie, form: flatForm({ ...SAMPLE_SETTINGS, module: { ...SAMPLE_SETTINGS.module, gammaPmp: -0.9 } }) });
    expect(r.status).toBe(200);
    expect(r.body).toContain("Settings saved");
    expect(r.body).toMatch(/γPmp -0.9 %\/°C is outside the usual/);
    const [row] = await db.select().from(schema.sites).where(eq(schema.sites.id, site.id));
    expect(row!.settings.module.gammaPmp).toBe(-0.9);
  });
});
