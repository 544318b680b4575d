import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { launch, newPage, shot, signInAs } from "../helpers/browser";
import { BASE, freshIp } from "../helpers/http";

const HOMES: [string, RegExp, string][] = [
  ["admin@sunsift.test", /\/portfolio$/, "Portfolio"],
  ["engineer@sunsift.test", /\/portfolio$/, "Portfolio"],
  ["lead@sunsift.test", /\/portfolio$/, "Portfolio"],
  ["pilot@sunsift.test", /\/(portfolio|sites\/[^/]+\/fly-list)$/, ""],
  ["tech@sunsift.test", /\/(portfolio|sites\/[^/]+\/work-orders)$/, ""],
  ["owner@sunsift.test", /\/portfolio$/, "Portfolio"],
];

let browser: Browser;
beforeAll(async () => {
  browser = await launch();
});
afterAll(async () => {
  await browser?.close();
});

describe("each demo user signs in and sees their home", () => {
  for (const [email, home, heading] of HOMES) {
    it(email, async () => {
      const { page, consoleErrors } = await newPage(browser, undefined, freshIp());
      await signInAs(page, email);
      expect(new URL(page.url()).pathname).toMatch(home);
      if (heading) expect(await page.textContent("h1")).toContain(heading);
      const role = { admin: "Admin", engineer: "Performance engineer", lead: "O&M lead", pilot: "Pilot", tech: "Technician", owner: "Owner" }[email.split("@")[0]!]!;
      expect(await page.textContent("[data-testid=user-roles]")).toContain(role);
      await shot(page, `home-${email.split("@")[0]}`);
      expect(consoleErrors).toEqual([]);
      await page.context().close();
    });
  }

  it("an owner gets the 403 page on Settings, and no Settings link", async () => {
    const { page } = await newPage(browser, undefined, freshIp());
    await signInAs(page, "owner@sunsift.test");
    expect(await page.locator("nav >> text=Settings").count()).toBe(0);
    const res = await page.goto(`${BASE}/settings`);
    expect(res?.status()).toBe(403);
    expect(await page.textContent("h1")).toContain("Not available for your role");
    await shot(page, "owner-settings-403");
    await page.context().close();
  });

  it("a wrong password shows one plain message and keeps the person on the sign-in page", async () => {
    const { page } = await newPage(browser, undefined, freshIp());
    await page.goto(`${BASE}/login`);
    await page.waitForSelector("html[data-hydrated]");
    await page.fill("#email", "engineer@sunsift.test");
    await page.fill("#password", "not-the-password");
    await page.click("button[type=submit]");
    await page.waitForSelector("[role=alert]");
    expect(await page.textContent("[role=alert]")).toContain("do not match an active account");
    expect(new URL(page.url()).pathname).toBe("/login");
    await page.context().close();
  });
});
