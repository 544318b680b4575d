/**
 * The field loop in a real browser: an O&M lead sends a flag to the field, the technician
 * completes the work order on a phone-sized screen (with a photo), and the owner sees the
 * verified recovery. Screenshots go to TEST_OUTPUT.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import * as schema from "../../app/db/schema";
import { addDays, localDay } from "../../app/domain/work-orders";
import { launch, newPage, shot, signInAs } from "../helpers/browser";
import { createOrg, db } from "../helpers/db";
import { BASE, freshIp } from "../helpers/http";

let browser: Browser;
let org: Awaited<ReturnType<typeof createOrg>>;
let flagId = "";
let woUrl = "";
const today = localDay(new Date(), "Europe/Madrid");
const repairDay = addDays(today, -8);
// A 2×2 PNG, standing in for a phone photo.
const PNG = Buffer.from("iVBORw0KGgoAAAANSUhEUgAAAAIAAAACCAIAAAD91JpzAAAAFklEQVR4nGP4z8DAwMDAxMDAwMDAAAANHQEDasKb6QAAAABJRU5ErkJggg==", "base64");

beforeAll(async () => {
  browser = await launch();
  org = await createOrg("Browser field");
  const [blk] = await db.insert(schema.blocks).values({ siteId: org.site.id, name: "B2" }).returning();
  const ids: number[] = [];
  for (let c = 1; c <= 6; c++) {
    const name = `B2-I3-C0${c}`;
    const [d] = await db.insert(schema.devices).values({ siteId: org.site.id, kind: "combiner", name, blockId: blk!.id, stringCount: 12 }).returning();
    ids.push(d!.id);
    await db.insert(schema.strings).values(Array.from({ length: 12 }, (_, i) => ({ combinerId: d!.id, number: i + 1, modules: 28, x: (c - 1) * 70 + i * 5, y: 0 })));
  }
  const target = ids[4]!;
  const [f] = await db
    .insert(schema.flags)
    .values({ siteId: org.site.id, combinerId: target, state: "new", firstDay: addDays(today, -25), lastDay: today, stringsOut: 1, confidence: 0.96, lostKwhPerDay: 9.8, lostKwhToDate: 230 })
    .returning();
  flagId = f!.id;
  const days = [];
  for (let i = 1; i <= 7; i++) days.push({ siteId: org.site.id, combinerId: target, day: addDays(repairDay, -i), validIntervals: 60, totalIntervals: 100, outputIndex: 0.9 * (11 / 12), peerMedianOi: 0.9, lostKwh: 9.8 });
  for (let i = 1; i <= 7; i++) days.push({ siteId: org.site.id, combinerId: target, day: addDays(repairDay, i), validIntervals: 60, totalIntervals: 100, outputIndex: 0.9 * (1 + (i % 2 ? 0.003 : -0.002)), peerMedianOi: 0.9, lostKwh: 0 });
  await db.insert(schema.combinerDays).values(days);
});

afterAll(async () => {
  await browser?.close();
});

describe("field loop", () => {
  it("the O&M lead creates a work order from a flag", async () => {
    const { page, consoleErrors } = await newPage(browser, undefined, freshIp());
    await signInAs(page, org.people.lead.email, org.password);
    await page.goto(`${BASE}/sites/${org.site.id}/work-orders/new?flagId=${flagId}`);
    await page.waitForSelector("[data-testid=prefill-note]");
    expect(await page.inputValue("#combiner")).toBe("B2-I3-C05");
    expect(await page.inputValue("#title")).toBe("B2-I3-C05: 1 string out");
    await page.fill("#strings", "7");
    await page.fill("#whatToCheck", "");
    await page.selectOption("#assigneeId", { value: org.people.technician.id });
    await shot(page, "wo-new-from-flag");
    await Promise.all([page.waitForURL(/\/work-orders\/[0-9a-f-]{36}$/), page.click("button:has-text('Create work order')")]);
    woUrl = page.url();
    expect(await page.textContent("[data-testid=wo-state]")).toBe("assigned");
    expect(await page.textContent("[data-testid=wo-what]")).toBe("Check connectors, fuse and cable of string 7 on combiner B2-I3-C05. Measure the string current before and after.");
    expect(await page.locator("[data-testid=safety-block]").count()).toBe(1);
    expect(await page.locator("svg[role=img] rect[stroke='#e0a100']").count()).toBe(1);
    await shot(page, "wo-detail-lead");
    expect(consoleErrors).toEqual([]);
    await page.context().close();
  });

  it("the technician completes it on a phone", async () => {
    const { page, consoleErrors } = await newPage(browser, { width: 390, height: 844 }, freshIp());
    await signInAs(page, org.people.technician.email, org.password);
    await page.goto(`${BASE}/sites/${org.site.id}/work-orders`);
    expect(await page.textContent("h1")).toContain("My work");
    await page.waitForSelector("[data-testid=work-order-card]");
    await shot(page, "my-work-phone");
    await Promise.all([page.waitForURL(woUrl), page.click("[data-testid=work-order-card]")]);
    await page.waitForSelector("html[data-hydrated]");
    await page.click("button:has-text('Start work')");
    await page.waitForFunction(() => document.querySelector("[data-testid=wo-state]")?.textContent === "in progress");
    await page.check("input[name=resolution][value='fuse blown']");
    await page.fill("#workDone", "Fuse of string 7 blown; replaced with a 15 A gPV fuse, checked the other eleven");
    await page.fill("#minutesSpent", "45");
    await page.fill("#repairedOn", repairDay);
    await page.setInputFiles("#photos", { name: "fuse.png", mimeType: "image/png", buffer: PNG });
    await shot(page, "wo-closeout-phone");
    await page.click("button:has-text('Close as done')");
    await page.waitForFunction(() => document.querySelector("[data-testid=wo-state]")?.textContent === "done");
    expect(await page.textContent("[data-testid=wo-resolution]")).toBe("fuse blown");
    expect(await page.textContent("[data-testid=wo-recovery]")).toContain("Recovered: 1 string back");
    await page.waitForSelector("img[alt^='Photo']");
    await page.locator("img[alt^='Photo']").scrollIntoViewIfNeeded();
    // The photo comes back through the photo route (a broken image would have naturalWidth 0).
    await page.waitForFunction(() => {
      const img = document.querySelector<HTMLImageElement>("img[alt^='Photo']");
      return !!img && img.complete && img.naturalWidth === 2;
    }, undefined, { timeout: 15_000 });
    // Nothing wider than the phone.
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
    await shot(page, "wo-done-phone");
    expect(consoleErrors).toEqual([]);
    await page.context().close();
  });

  it("the owner sees the recovery", async () => {
    const { page, consoleErrors } = await newPage(browser, undefined, freshIp());
    await signInAs(page, org.people.owner.email, org.password);
    await page.goto(`${BASE}/portfolio`);
    expect(await page.textContent("[data-testid=recovered]")).toMatch(/kWh/);
    await shot(page, "portfolio-owner");
    await page.goto(`${BASE}/sites/${org.site.id}/recovery`);
    await page.waitForSelector(".uplot canvas", { timeout: 30_000 });
    expect(await page.textContent("[data-testid=recovery-row]")).toContain("Recovered: 1 string back");
    expect(await page.textContent("[data-testid=recovered-kwh]")).toMatch(/^[1-9][\d,]* kWh$/);
    await shot(page, "recovery-owner");
    await page.click("a:has-text('Monthly report')");
    await page.waitForSelector("[data-testid=report-kwh]");
    await shot(page, "recovery-report");
    expect(consoleErrors).toEqual([]);
    await page.context().close();
  });
});
