/**
 * An engineer opens the flags table and a combiner's detail in a real browser (headless
 * Chromium); screenshots go to test-output/.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chromium, type Browser } from "playwright-core";
import { mkdirSync } from "node:fs";
import { createOrg, pool } from "../helpers/db";
import { BASE } from "../helpers/http";
import { loadFixture } from "../integration/analysis-fixtures";
import { runAnalysis } from "../../app/models/analysis.server";

const OUT = process.env.TEST_OUTPUT ?? "test-output";
let browser: Browser;
let org: Awaited<ReturnType<typeof createOrg>>;

beforeAll(async () => {
  mkdirSync(OUT, { recursive: true });
  org = await createOrg("AnBrowser");
  await loadFixture(org.site.id, "small", { copies: 5 });
  await runAnalysis(org.site.id, { trigger: "manual" });
  browser = await chromium.launch({
    executablePath: "/usr/bin/chromium",
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
  });
});

afterAll(async () => {
  await browser?.close();
});

describe("analysis screens in the browser", () => {
  it("engineer: overview map, flags table, then the combiner detail with its charts", async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    await page.goto(`${BASE}/login`);
    await page.waitForSelector("html[data-hydrated]");
    await page.fill('input[name="email"]', org.people.engineer.email);
    await page.fill('input[name="password"]', org.password);
    await Promise.all([page.waitForURL((u) => !u.pathname.startsWith("/login")), page.click('button[type="submit"]')]);

    await page.goto(`${BASE}/sites/${org.site.id}`);
    await page.waitForSelector("html[data-hydrated]");
    await expect(page.getByTestId("open-loss").textContent()).resolves.toMatch(/kWh\/day/);
    await page.screenshot({ path: `${OUT}/analysis-overview.png`, fullPage: true });

    await page.goto(`${BASE}/sites/${org.site.id}/flags`);
    await page.waitForSelector("html[data-hydrated]");
    const rows = page.getByTestId("flag-row");
    expect(await rows.count()).toBe(1);
    expect(await rows.first().textContent()).toContain("B1-I1-C03");
    await page.screenshot({ path: `${OUT}/analysis-flags.png`, fullPage: true });

    await page.getByRole("link", { name: "B1-I1-C03" }).click();
    await page.waitForSelector('[data-testid="combiner-sentence"]');
    expect(await page.getByTestId("combiner-sentence").textContent()).toMatch(/About 1 of 12 strings out since/);
    await page.waitForSelector('[data-testid="combiner-charts"] canvas', { timeout: 30_000 });
    expect(await page.locator('[data-testid="combiner-charts"] canvas').count()).toBe(3);
    await page.screenshot({ path: `${OUT}/analysis-combiner.png`, fullPage: true });

    // A day above the peers lost nothing: the daily table says so instead of a negative loss.
    const above = (
      await pool.query<{ combiner_id: number; day: string; lost_kwh: number }>(
        `select combiner_id, day::text as day, lost_kwh from combiner_days where site_id = $1 and lost_kwh < -0.5 order by lost_kwh limit 1`,
        [org.site.id],
      )
    ).rows[0];
    expect(above, "the fixture has a combiner-day above its peers").toBeDefined();
    await page.goto(`${BASE}/sites/${org.site.id}/combiners/${above!.combiner_id}`);
    await page.waitForSelector("html[data-hydrated]");
    const row = page.locator("tr", { has: page.locator("td", { hasText: above!.day }) });
    expect(await row.locator("td").nth(4).textContent()).toBe("0 · above peers");
    const lostColumn = await page.locator("#days-h ~ div table tbody tr td:nth-child(5)").allTextContents();
    expect(lostColumn.length).toBeGreaterThan(0);
    expect(lostColumn.filter((x) => x.startsWith("-"))).toEqual([]);
    // nor a negative strings deficit (its output vs peers, above 100 %, says it is ahead)
    const deficitColumn = await page.locator("#days-h ~ div table tbody tr td:nth-child(4)").allTextContents();
    expect(deficitColumn.filter((x) => x.startsWith("-"))).toEqual([]);
    await page.screenshot({ path: `${OUT}/analysis-combiner-above-peers.png`, fullPage: true });
    expect(errors).toEqual([]);
  });
});
