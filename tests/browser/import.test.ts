import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { hydrated, launch, newPage, shot, signInAs } from "../helpers/browser";
import { BASE, freshIp } from "../helpers/http";
import { createOrg } from "../helpers/db";
import { importLayout } from "../../app/models/layout.server";

const LAYOUT = `block,inverter,combiner,string,modules
B1,B1-I1,B1-I1-C01,1,28
B1,B1-I1,B1-I1-C01,2,28
B1,B1-I1,B1-I1-C02,1,28
B1,B1-I1,B1-I1-C02,2,28
`;

// A wide SCADA export: kW and °F to convert, one text value to reject, a units-free column to ignore.
const EXPORT = [
  "Timestamp,B1-I1-C01 DC Current [A],B1-I1-C02 DC Current [A],B1-I1 AC Power [kW],MET1 POA [W/m2],MET1 Module Temp [degF],Operator note",
  ...Array.from({ length: 12 }, (_, i) => {
    const t = `2026-06-10 ${String(10 + Math.floor(i / 4)).padStart(2, "0")}:${String((i % 4) * 15).padStart(2, "0")}`;
    return `${t},${(8 + i / 10).toFixed(2)},${i === 5 ? "offline" : (7.9 + i / 10).toFixed(2)},${40 + i},${800 + i * 5},${110 + i},ok`;
  }),
].join("\n");

let browser: Browser;
let org: Awaited<ReturnType<typeof createOrg>>;

beforeAll(async () => {
  org = await createOrg("BrowserImport");
  const r = await importLayout({ orgId: org.org.id, userId: null }, org.site.id, LAYOUT, { dryRun: false });
  expect(r.ok).toBe(true);
  browser = await launch();
});
afterAll(async () => {
  await browser?.close();
});

describe("importing a production export in the browser", () => {
  it("upload → mapping → progress → summary, as a performance engineer", async () => {
    const { page, consoleErrors } = await newPage(browser, undefined, freshIp());
    await signInAs(page, org.people.engineer.email, org.password);
    await page.goto(`${BASE}/sites/${org.site.id}/data`);
    await hydrated(page);
    expect(await page.textContent("h1")).toContain("Data");
    await shot(page, "import-1-data-empty");

    await page.setInputFiles("#export-file", { name: "scada-june.csv", mimeType: "text/csv", buffer: Buffer.from(EXPORT) });
    await Promise.all([page.waitForURL(/\/data\/[0-9a-f-]{36}$/, { timeout: 30_000 }), page.click("button:has-text('Upload')")]);
    await hydrated(page);

    // Mapping: proposed from the headers, editable.
    await page.waitForSelector("[data-testid=mapping-table], [data-testid=sample-error]", { timeout: 60_000 }).catch(async (e: unknown) => {
      await shot(page, "import-2-mapping-missing");
      throw e;
    });
    expect(await page.textContent("[data-testid=detected-interval]")).toBe("15 min");
    expect(await page.textContent("[data-testid=detected-delimiter]")).toBe("comma");
    expect(await page.inputValue("input[name='device.3']")).toBe("B1-I1");
    expect(await page.inputValue("select[name='metric.3']")).toBe("ac_power");
    expect(await page.inputValue("select[name='unit.3']")).toBe("kW");
    expect(await page.inputValue("select[name='unit.5']")).toBe("degF");
    expect(await page.inputValue("input[name='device.6']")).toBe("");
    await page.fill("#templateName", "June SCADA");
    await shot(page, "import-2-mapping");

    await page.click("button:has-text('Start the import')");
    // Progress (polled) gives way to the summary when the worker is done.
    await page.waitForSelector("[data-testid=import-progress], [data-testid=import-summary]", { timeout: 30_000 });
    if (await page.locator("[data-testid=import-progress]").count()) await shot(page, "import-3-progress");
    await page.waitForSelector("[data-testid=import-summary]", { timeout: 60_000 });
    expect(await page.textContent("[data-testid=summary-accepted]")).toBe("12");
    expect(await page.textContent("[data-testid=summary-rejected]")).toBe("0");
    expect(await page.textContent("[data-testid=summary-devices]")).toBe("4");
    expect(await page.textContent("[data-testid=import-summary]")).toContain('"offline" is not a number');
    expect(await page.textContent("[data-testid=import-summary]")).toContain("Loaded 59 readings");
    await shot(page, "import-4-summary");

    // The reject report downloads as CSV.
    const [download] = await Promise.all([page.waitForEvent("download"), page.click("text=Download the reject report (CSV)")]);
    const path = await download.path();
    const { readFileSync } = await import("node:fs");
    expect(readFileSync(path, "utf8")).toBe('line,column,value,reason\n7,B1-I1-C02 DC Current [A],offline,"""offline"" is not a number"\n');

    // The history lists it; the template is offered next time.
    await page.goto(`${BASE}/sites/${org.site.id}/data`);
    expect(await page.textContent("[data-testid=import-history]")).toContain("scada-june.csv");
    await shot(page, "import-5-history");
    expect(consoleErrors).toEqual([]);
    await page.context().close();
  });

  it("an owner cannot reach the upload", async () => {
    const { page } = await newPage(browser, undefined, freshIp());
    await signInAs(page, org.people.owner.email, org.password);
    expect(await page.locator("nav >> text=Data").count()).toBe(0);
    const res = await page.goto(`${BASE}/sites/${org.site.id}/data`);
    expect(res?.status()).toBe(403);
    expect(await page.textContent("h1")).toContain("Not available for your role");
    expect(await page.locator("#export-file").count()).toBe(0);
    await shot(page, "import-owner-403");
    await page.context().close();
  });
});
