import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { encodePng } from "../../seeds/images";
import { hydrated, launch, newPage, shot, signInAs } from "../helpers/browser";
import { db } from "../helpers/db";
import { BASE, freshIp } from "../helpers/http";
import { plantWithFlag } from "../integration/flights-fixture";

let browser: Browser;
beforeAll(async () => {
  browser = await launch();
});
afterAll(async () => {
  await browser?.close();
});

/** A small false-colour picture with one hot square, like a drone's IR frame. */
function irPng(): Buffer {
  const w = 80;
  const h = 64;
  const rgb = new Uint8Array(w * h * 3);
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      const hot = x > 50 && x < 60 && y > 20 && y < 30;
      rgb.set(hot ? [255, 230, 60] : [60, 0, 120 + ((x + y) % 20)], (y * w + x) * 3);
    }
  return encodePng(w, h, rgb);
}

describe("pilot: fly list → log a flight → import findings → the flag turns explained", () => {
  it("works end to end in the browser", async () => {
    const p = await plantWithFlag("Browser flights");
    const { page, consoleErrors } = await newPage(browser, { width: 1280, height: 900 }, freshIp());
    await signInAs(page, p.people.pilot.email, p.password);

    // 1. The fly list ranks B2 (130 kWh/day) above B1 (60 kWh/day) and names the combiners.
    await page.goto(`${BASE}/sites/${p.siteId}/fly-list`);
    await hydrated(page);
    const blocks = await page.locator("[data-testid=fly-list] > li").allTextContents();
    expect(blocks).toHaveLength(2);
    expect(blocks[0]).toContain("Block B2");
    expect(blocks[1]).toContain("Block B1");
    expect(blocks[1]).toContain("B1-I1-C01");
    expect(await page.textContent("[data-testid=flight-windows]")).toBeTruthy();
    // today's rows are open; choosing the next day shows its 15-minute rows instead
    expect(await page.locator("[data-testid=timeline-rows] tbody tr").count()).toBeGreaterThan(20);
    await page.click("[data-testid=flight-windows] li:nth-child(2) button");
    expect(await page.locator("[data-testid=timeline-rows]").count()).toBe(1);
    expect(await page.locator("[data-testid=timeline-rows] tbody tr").count()).toBeGreaterThan(20);
    await page.click("text=How the windows are computed");
    expect(await page.textContent("[data-testid=clear-sky-model]")).toContain("1098 · cos Z · exp(−0.059 / cos Z)");
    await shot(page, "flights-fly-list");

    // 2. Log a flight with a POA below the minimum: the warning shows while typing.
    await page.click("text=Log a flight");
    await page.waitForURL(/\/flights$/);
    await hydrated(page);
    await page.fill("#startedLocal", "2026-10-21T13:30");
    await page.check(`input[name=blockIds][value="${p.blocks[0]!.id}"]`);
    await page.fill("#aircraft", "quadcopter, 4 batteries");
    await page.fill("#cameraText", "640×512 radiometric, 13 mm");
    await page.fill("#poaWm2", "480");
    await page.fill("#windKmh", "9");
    await page.fill("#cloudOkta", "1");
    await page.fill("#ambientC", "24");
    expect(await page.textContent("[data-testid=condition-checks]")).toContain("POA 480 W/m² is below the 600 W/m² minimum for this inspection");
    await page.fill("#poaWm2", "820");
    expect(await page.textContent("[data-testid=condition-checks]")).toContain("POA 820 W/m² meets the 600 W/m² minimum");
    await shot(page, "flights-log-form");
    await Promise.all([page.waitForURL(/\/flights\/[0-9a-f-]{36}$/), page.click("button:has-text('Save the flight')")]);
    await hydrated(page);
    expect(await page.textContent("[data-testid=flight-blocks]")).toBe("B1");

    // 3. Import findings: one whole string offline on the flagged combiner.
    const csv = "string,class,delta_t_k,image,notes\nB1-I1-C01/7,string offline,4.2,ir-007.png,whole string uniformly warm\nB1-I1-C02/3,cell hot spot,11.5,,single hot cell\n";
    await page.setInputFiles("#findings-file", { name: "findings.csv", mimeType: "text/csv", buffer: Buffer.from(csv) });
    await page.click("button:has-text('Import findings')");
    await page.waitForSelector("[data-testid=findings-result]");
    expect(await page.textContent("[data-testid=findings-result]")).toContain("2 findings imported. Cross-reference: 1 flag explained");
    expect(await page.textContent("[data-testid=xref-flag]")).toContain("B1-I1-C01 → string 7");
    expect(await page.textContent("[data-testid=xref-flag]")).toContain("Check connectors, fuse and cable of B1-I1-C01 string 7 first.");
    const [flag] = await db.select().from(schema.flags).where(eq(schema.flags.id, p.flag.id));
    expect(flag!.state).toBe("explained");

    // 4. Upload the picture the CSV named; open it in the viewer and mark the finding.
    await page.setInputFiles("#images-flight", { name: "ir-007.png", mimeType: "image/png", buffer: irPng() });
    await page.waitForFunction(() => document.querySelector("[data-testid=image-upload-status]")?.textContent?.includes("1 image stored"), null, { timeout: 30_000 });
    await page.waitForSelector("button[aria-label='Open ir-007.png'] img");
    await shot(page, "flights-flight-findings");
    await page.click("button[aria-label='Open ir-007.png']");
    const img = page.locator("[data-testid=viewer-image]");
    const box = (await img.boundingBox())!;
    await img.click({ position: { x: box.width * 0.69, y: box.height * 0.39 } });
    await page.waitForSelector("[data-testid=viewer-mark]");
    await page.waitForFunction(() => !document.body.textContent?.includes("saving the mark"));
    await shot(page, "flights-viewer");
    const [im] = await db.select().from(schema.findingImages).where(eq(schema.findingImages.fileName, "ir-007.png"));
    expect(im!.markX).toBeCloseTo(0.69, 1);
    expect(im!.thumbKey).toBeTruthy();
    await page.keyboard.press("Escape");

    // 5. Back on the fly list, block B1 needs no flight any more.
    await page.goto(`${BASE}/sites/${p.siteId}/fly-list`);
    await hydrated(page);
    const after = await page.locator("[data-testid=fly-list] > li").allTextContents();
    expect(after).toHaveLength(1);
    expect(after[0]).toContain("Block B2");

    // 6. The printable brief lists the blocks in order, windows, checklist and cautions.
    await page.goto(`${BASE}/sites/${p.siteId}/fly-list/brief`);
    await hydrated(page);
    expect(await page.textContent("[data-testid=brief-blocks]")).toContain("1. Block B2");
    expect(await page.textContent("main")).toContain("Conditions checklist");
    await page.emulateMedia({ media: "print" });
    await shot(page, "flights-brief");
    expect(consoleErrors).toEqual([]);
    await page.context().close();
  });
});
