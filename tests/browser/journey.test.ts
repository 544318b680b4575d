/**
 * The main journey end to end in headless Chromium, one organisation of its own, screenshots at
 * each step (TEST_OUTPUT/journey-*.png), no console errors or page errors on any page:
 * engineer uploads an export → the import queues the analysis → a flag on the Flags screen → the
 * lead sees its block on the fly list → the pilot logs a flight and imports a finding, the flag
 * turns explained → the lead creates a work order from the flag → the technician closes it on a
 * phone-sized screen → the owner sees the repair on the recovery screen, waiting for data
 * (verification needs clean days after the fix, which this journey cannot wait for).
 *
 * The export is fixtures/small/readings-2026-10.csv (one clear day; B1-I1-C03 string 5 open, see
 * fixtures/small/truth.json) repeated on five days, so the flag rule (N of the last M days) can fire.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, Page } from "playwright-core";
import { readFileSync } from "node:fs";
import { and, eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { newToken, sha256 } from "../../app/services/password.server";
import { hydrated, launch, newPage, shot, signInAs } from "../helpers/browser";
import { createOrg, db } from "../helpers/db";
import { BASE, freshIp, http } from "../helpers/http";

const FIX = new URL("../../fixtures/small/", import.meta.url);
const truth = JSON.parse(readFileSync(new URL("truth.json", FIX), "utf8")) as { faults: { strings: string[]; devices: string[] }[] };
const FAULT_STRING = truth.faults[0]!.strings[0]!; // "B1-I1-C03/5"
const FAULT_COMBINER = truth.faults[0]!.devices[0]!;
const DAYS = ["2026-10-15", "2026-10-16", "2026-10-17", "2026-10-18", "2026-10-19"];

function fiveDayExport(): string {
  const [header, ...rows] = readFileSync(new URL("readings-2026-10.csv", FIX), "utf8").trim().split(/\r?\n/);
  const out = [header!];
  for (const day of DAYS) for (const r of rows) out.push(r.replace(/^2026-10-15/, day));
  return out.join("\n") + "\n";
}

let browser: Browser;
let org: Awaited<ReturnType<typeof createOrg>>;
let siteId = "";
let flagId = "";
let woUrl = "";
const pages: { who: string; errors: string[] }[] = [];

async function open(who: string, email: string, viewport?: { width: number; height: number }): Promise<Page> {
  const { page, consoleErrors } = await newPage(browser, viewport, freshIp());
  pages.push({ who, errors: consoleErrors });
  await signInAs(page, email, org.password);
  return page;
}
function errorsOf(who: string) {
  return pages.filter((p) => p.who === who).flatMap((p) => p.errors);
}

beforeAll(async () => {
  browser = await launch();
  org = await createOrg("Journey");
  // An admin's API token (as made under Settings → API tokens) creates the site and its layout.
  const token = newToken("ss_");
  await db.insert(schema.apiTokens).values({ orgId: org.org.id, name: "journey", tokenHash: sha256(token), prefix: token.slice(0, 7), scopes: ["write"] });
  const auth = { authorization: `Bearer ${token}` };
  const site = await http("/api/v1/sites", { method: "POST", headers: { ...auth, "content-type": "application/json" }, body: readFileSync(new URL("site.json", FIX), "utf8") });
  expect(site.status, site.body).toBe(201);
  siteId = site.json<{ id: string }>().id;
  const layout = await http(`/api/v1/sites/${siteId}/layout`, { method: "POST", headers: { ...auth, "content-type": "text/csv" }, body: readFileSync(new URL("layout.csv", FIX), "utf8") });
  expect(layout.status, layout.body).toBe(200);
  // The owner is given the new site (Settings → Users does the same).
  await db.insert(schema.siteAccess).values({ userId: org.people.owner.id, siteId });
});

afterAll(async () => {
  await browser?.close();
});

describe("the main journey, end to end", () => {
  it("engineer: uploads an export (mapping → progress → summary); the analysis raises a flag", async () => {
    const page = await open("engineer", org.people.engineer.email);
    await page.goto(`${BASE}/sites/${siteId}/layout`);
    await hydrated(page);
    expect(await page.textContent("main")).toContain(FAULT_COMBINER);
    await shot(page, "journey-01-layout");

    await page.goto(`${BASE}/sites/${siteId}/data`);
    await hydrated(page);
    await page.setInputFiles("#export-file", { name: "scada-2026-10-15_19.csv", mimeType: "text/csv", buffer: Buffer.from(fiveDayExport()) });
    await shot(page, "journey-02-data-upload");
    await Promise.all([page.waitForURL(/\/data\/[0-9a-f-]{36}$/, { timeout: 60_000 }), page.click("button:has-text('Upload')")]);
    await hydrated(page);
    await page.waitForSelector("[data-testid=mapping-table]", { timeout: 120_000 }).catch(async (e: unknown) => {
      await shot(page, "journey-03-mapping-missing");
      throw e;
    });
    expect(await page.textContent("[data-testid=detected-interval]")).toBe("5 min");
    await shot(page, "journey-03-mapping");
    await page.click("button:has-text('Start the import')");
    await page.waitForSelector("[data-testid=import-progress], [data-testid=import-summary]", { timeout: 30_000 });
    if (await page.locator("[data-testid=import-progress]").count()) await shot(page, "journey-04-progress");
    await page.waitForSelector("[data-testid=import-summary]", { timeout: 120_000 });
    expect(await page.textContent("[data-testid=summary-accepted]")).toBe((DAYS.length * 288).toLocaleString("en-GB"));
    expect(await page.textContent("[data-testid=summary-rejected]")).toBe("0");
    await shot(page, "journey-05-summary");

    // The import queued the analysis; the flag shows on the Flags screen once it has run.
    const until = Date.now() + 150_000;
    for (;;) {
      await page.goto(`${BASE}/sites/${siteId}/flags`);
      await hydrated(page);
      if ((await page.locator("[data-testid=flag-row]").count()) > 0) break;
      if (Date.now() > until) {
        await shot(page, "journey-06-flags-missing");
        throw new Error("no flag within 150 s of the import");
      }
      await page.waitForTimeout(2000);
    }
    const rows = await page.locator("[data-testid=flag-row]").allTextContents();
    expect(rows).toHaveLength(1);
    expect(rows[0]).toContain(FAULT_COMBINER);
    expect(rows[0]).toContain("1 of 12");
    expect(rows[0]).toContain("needs flight");
    await shot(page, "journey-06-flags");
    const [flag] = await db.select().from(schema.flags).where(eq(schema.flags.siteId, siteId));
    flagId = flag!.id;
    await page.goto(`${BASE}/sites/${siteId}`);
    await hydrated(page);
    await shot(page, "journey-07-overview");
    expect(errorsOf("engineer")).toEqual([]);
    await page.context().close();
  });

  it("lead: the fly list asks for a flight over the flag's block", async () => {
    const page = await open("lead", org.people.lead.email);
    await page.goto(`${BASE}/sites/${siteId}/fly-list`);
    await hydrated(page);
    const blocks = await page.locator("[data-testid=fly-list] > li").allTextContents();
    expect(blocks).toHaveLength(1);
    expect(blocks[0]).toContain("Block B1");
    expect(blocks[0]).toContain(FAULT_COMBINER);
    await shot(page, "journey-08-fly-list-lead");
    expect(errorsOf("lead")).toEqual([]);
    await page.context().close();
  });

  it("pilot: logs a flight and imports the finding; the flag turns explained", async () => {
    const page = await open("pilot", org.people.pilot.email);
    await page.goto(`${BASE}/sites/${siteId}/flights`);
    await hydrated(page);
    const [block] = await db.select().from(schema.blocks).where(and(eq(schema.blocks.siteId, siteId), eq(schema.blocks.name, "B1")));
    await page.fill("#startedLocal", "2026-10-21T13:30");
    await page.check(`input[name=blockIds][value="${block!.id}"]`);
    await page.fill("#aircraft", "quadcopter, 4 batteries");
    await page.fill("#cameraText", "640×512 radiometric, 13 mm");
    await page.fill("#poaWm2", "820");
    await page.fill("#windKmh", "9");
    await page.fill("#cloudOkta", "1");
    await page.fill("#ambientC", "22");
    await shot(page, "journey-09-flight-form");
    await Promise.all([page.waitForURL(/\/flights\/[0-9a-f-]{36}$/), page.click("button:has-text('Save the flight')")]);
    await hydrated(page);
    const csv = `string,class,delta_t_k,notes\n${FAULT_STRING},string offline,4.1,whole string uniformly warm\n`;
    await page.setInputFiles("#findings-file", { name: "findings.csv", mimeType: "text/csv", buffer: Buffer.from(csv) });
    await page.click("button:has-text('Import findings')");
    await page.waitForSelector("[data-testid=findings-result]");
    expect(await page.textContent("[data-testid=findings-result]")).toContain("1 finding imported. Cross-reference: 1 flag explained");
    await shot(page, "journey-10-findings");
    const [flag] = await db.select().from(schema.flags).where(eq(schema.flags.id, flagId));
    expect(flag!.state).toBe("explained");
    expect(errorsOf("pilot")).toEqual([]);
    await page.context().close();
  });

  it("lead: sees the flag explained and creates a work order from it", async () => {
    const page = await open("lead", org.people.lead.email);
    await page.goto(`${BASE}/sites/${siteId}/flags`);
    await hydrated(page);
    expect(await page.locator("[data-testid=flag-row]").first().textContent()).toContain("explained");
    await shot(page, "journey-11-flags-explained");
    await page.goto(`${BASE}/sites/${siteId}/work-orders/new?flagId=${flagId}`);
    await hydrated(page);
    expect(await page.inputValue("#combiner")).toBe(FAULT_COMBINER);
    // The flag says how many strings are out; which one comes from the pilot's finding.
    await page.fill("#strings", FAULT_STRING.split("/")[1]!);
    await page.selectOption("#assigneeId", { value: org.people.technician.id });
    await shot(page, "journey-12-work-order-new");
    await Promise.all([page.waitForURL(/\/work-orders\/[0-9a-f-]{36}$/), page.click("button:has-text('Create work order')")]);
    woUrl = page.url();
    expect(await page.textContent("[data-testid=wo-state]")).toBe("assigned");
    await shot(page, "journey-13-work-order");
    expect(errorsOf("lead")).toEqual([]);
    await page.context().close();
  });

  it("technician: closes the work order on a phone", async () => {
    const page = await open("technician", org.people.technician.email, { width: 390, height: 844 });
    await page.goto(`${BASE}/sites/${siteId}/work-orders`);
    await page.waitForSelector("[data-testid=work-order-card]");
    await shot(page, "journey-14-my-work-phone");
    await Promise.all([page.waitForURL(woUrl), page.click("[data-testid=work-order-card]")]);
    await hydrated(page);
    await page.click("button:has-text('Start work')");
    await page.waitForFunction(() => document.querySelector("[data-testid=wo-state]")?.textContent === "in progress");
    await page.check("input[name=resolution][value='other']");
    await page.fill("#workDone", "String connector pulled apart; re-made with a matching pair, string current back in line");
    await page.fill("#minutesSpent", "35");
    await shot(page, "journey-15-closeout-phone");
    await page.click("button:has-text('Close as done')");
    await page.waitForFunction(() => document.querySelector("[data-testid=wo-state]")?.textContent === "done");
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
    await shot(page, "journey-16-done-phone");
    const [flag] = await db.select().from(schema.flags).where(eq(schema.flags.id, flagId));
    expect(flag!.state).toBe("verifying");
    expect(errorsOf("technician")).toEqual([]);
    await page.context().close();
  });

  it("owner: sees the repair on the recovery screen, waiting for data after the fix", async () => {
    const page = await open("owner", org.people.owner.email);
    await page.goto(`${BASE}/sites/${siteId}/recovery`);
    await hydrated(page);
    const row = await page.textContent("[data-testid=recovery-row]");
    expect(row).toContain(FAULT_COMBINER);
    expect(row).toContain("verifying");
    expect(await page.textContent("main")).toMatch(/Waiting for data\s*1/);
    await shot(page, "journey-17-recovery-owner");
    expect(errorsOf("owner")).toEqual([]);
    await page.context().close();
  });

  it("no page of the journey logged a console error or a page error", () => {
    expect(pages.flatMap((p) => p.errors.map((e) => `${p.who}: ${e}`))).toEqual([]);
  });
});
