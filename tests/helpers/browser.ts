import { chromium, type Browser, type Page } from "playwright-core";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { BASE } from "./http";

export const OUT = process.env.TEST_OUTPUT ?? "test-output";

export async function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: "/usr/bin/chromium",
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
  });
}

/** A page that records console errors and failed requests, so tests can assert there were none. */
export async function newPage(browser: Browser, viewport = { width: 1280, height: 860 }, ip?: string) {
  const context = await browser.newContext({ viewport, extraHTTPHeaders: ip ? { "x-forwarded-for": ip } : {} });
  const page = await context.newPage();
  const consoleErrors: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error") consoleErrors.push(m.text());
  });
  page.on("pageerror", (e) => consoleErrors.push(e.message));
  return { page, consoleErrors };
}

export async function hydrated(page: Page) {
  await page.waitForSelector("html[data-hydrated]", { timeout: 30_000 });
}

export async function signInAs(page: Page, email: string, password = "sunsift-demo") {
  await page.goto(`${BASE}/login`);
  await hydrated(page);
  await page.fill("#email", email);
  await page.fill("#password", password);
  await Promise.all([page.waitForURL((u) => !u.pathname.startsWith("/login"), { timeout: 30_000 }), page.click("button[type=submit]")]);
  await hydrated(page);
  // The router moves the address bar before React has drawn the new page (the render runs in a
  // transition), so wait for the signed-in layout itself: the sign-in page has no role line.
  await page.waitForSelector("[data-testid=user-roles]", { state: "attached", timeout: 30_000 });
}

export async function shot(page: Page, name: string) {
  mkdirSync(OUT, { recursive: true });
  await page.screenshot({ path: join(OUT, `${name}.png`), fullPage: true });
}
