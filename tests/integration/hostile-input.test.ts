/**
 * The hostile corpus (fixtures/hostile/, described in its README): each malformed or hostile
 * file is refused with the exact message the user sees, and the tables it could touch are
 * byte-for-byte the same afterwards (md5 over ordered rows). Large files are made here.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import * as schema from "../../app/db/schema";
import { confirmImages, presignImages } from "../../app/models/findings.server";
import { sha256 } from "../../app/services/password.server";
import { siteDevices } from "../../app/models/imports.server";
import { db } from "../helpers/db";
import { http, signIn, visible } from "../helpers/http";
import { importBytes, siteWithLayout, tableChecksums, type Org } from "../helpers/imports";
import { insertFlight, plantWithFlag } from "./flights-fixture";

const fixture = (name: string) => readFileSync(new URL(`../../fixtures/hostile/${name}`, import.meta.url));

/** Text of a server-rendered page as the user reads it. */

const NOTHING = "Nothing was loaded.";

/** The alert box of a screen as the user reads it: its heading, then each listed problem. */
function alertLines(html: string): string[] {
  const box = /<div role="alert"[^>]*>(.*?)<\/div>/s.exec(html)?.[1] ?? "";
  return [...box.matchAll(/<(?:p|li)[^>]*>(.*?)<\/(?:p|li)>/gs)].map((m) => visible(m[1]!.replace(/<[^>]+>/g, "")));
}

// [file, exact error on the import screen]
const READINGS: [string, string][] = [
  ["readings-utf16le-bom.csv", `The file is UTF-16 text: save or export it as UTF-8 CSV. ${NOTHING}`],
  ["readings-utf16le-no-bom.csv", `The file is not text: it contains a NUL byte at byte 2. ${NOTHING}`],
  ["readings-latin1.csv", `The file is not valid UTF-8 (byte 0xE9 at byte 117): export it as UTF-8; it may be Latin-1 or Windows-1252. ${NOTHING}`],
  ["readings-png-renamed.csv", `The file is a PNG image, not CSV text: choose the exported CSV file. ${NOTHING}`],
  ["readings-pdf-renamed.csv", `The file is a PDF document, not CSV text: choose the exported CSV file. ${NOTHING}`],
  ["readings-zip-renamed.csv", `The file is a ZIP archive (an .xlsx workbook is one), not CSV text: export the sheet as CSV. ${NOTHING}`],
  ["readings-gzip.csv", `The file is gzip-compressed, not CSV text: decompress it first. ${NOTHING}`],
  ["readings-empty.csv", `The file is empty. ${NOTHING}`],
  ["readings-blank-lines.csv", `The file is empty. ${NOTHING}`],
  ["readings-header-only.csv", `Line 1: The file has a header but no data rows. ${NOTHING}`],
  ["readings-html-page.csv", `Line 1: The header has a single column ("<!DOCTYPE html>"): the delimiter is not a comma, semicolon, tab or pipe. ${NOTHING}`],
  ["readings-truncated-in-quote.csv", `Line 3: a quoted field opens on this line and is never closed: the file is cut off or malformed. ${NOTHING}`],
  ["readings-formula-values.csv", `No reading could be loaded: every data line was rejected or empty. First problem: line 2: "=HYPERLINK("http://evil.test","open")" is not a number. ${NOTHING}`],
  ["readings-formula-devices.csv", `No reading could be loaded: every data line was rejected or empty. First problem: line 2: unknown device "=HYPERLINK("http://evil.test")": not in the layout nor a weather station of the site. ${NOTHING}`],
  ["readings-path-devices.csv", `No reading could be loaded: every data line was rejected or empty. First problem: line 2: unknown device "../../etc/passwd": not in the layout nor a weather station of the site. ${NOTHING}`],
  ["readings-wrong-units.csv", `The mapping cannot be used: No column is mapped to a device and metric. ${NOTHING}`],
  ["readings-implausible-values.csv", `No reading could be loaded: every data line was rejected or empty. First problem: line 2: dc_current 99999 A is above the plausible maximum 10000 A. ${NOTHING}`],
  ["readings-garbage-timestamps.csv", `No reading could be loaded: every data line was rejected or empty. First problem: line 2: "yesterday" is not a valid timestamp: expected e.g. 2026-03-29 14:15, 2026-03-29T14:15:00+02:00 or 29/03/2026 14:15. ${NOTHING}`],
  ["readings-no-data-markers.csv", `No reading could be loaded: every value is a no-data marker (empty, NaN, −9999, −7999). ${NOTHING}`],
];

describe("hostile production exports", () => {
  let org: Org;
  beforeAll(async () => {
    org = await siteWithLayout("Hostile");
    await siteDevices(org.site);
  });

  for (const [file, message] of READINGS) {
    it(`${file}: refused, tables unchanged`, async () => {
      const before = await tableChecksums();
      const imp = await importBytes(org, fixture(file), { fileName: file });
      expect({ status: imp.status, error: imp.error, loaded: imp.readingsLoaded }).toEqual({ status: "failed", error: message, loaded: 0 });
      expect(await tableChecksums()).toEqual(before);
    });
  }

  it("a 3 MB unterminated quoted field: refused, tables unchanged", async () => {
    const text = "timestamp,device,metric,value\n2026-08-02T12:00:00+02:00,B1-I1-C01,dc_current,\"8.5\n" + "2026-08-02T12:05:00+02:00,B1-I1-C01,dc_current,8.5\n".repeat(60_000);
    const before = await tableChecksums();
    const imp = await importBytes(org, text);
    expect({ status: imp.status, error: imp.error }).toEqual({ status: "failed", error: `Line 2: a quoted field opens on this line and is never closed: the file is cut off or malformed. ${NOTHING}` });
    expect(await tableChecksums()).toEqual(before);
  });

  it("a 2 MB quoted field holding line breaks (closed): refused as one over-long line, tables unchanged", async () => {
    const text = 'timestamp,device,metric,value\n2026-08-03T12:00:00+02:00,B1-I1-C01,dc_current,8.5\n2026-08-03T12:05:00+02:00,B1-I1-C01,dc_current,"' + "9\n".repeat(1_000_000) + '"\n2026-08-03T12:10:00+02:00,B1-I1-C01,dc_current,8.5\n';
    const before = await tableChecksums();
    const imp = await importBytes(org, text);
    expect(imp.status).toBe("failed");
    expect(imp.error).toMatch(/^Line 3: line 3 is [\d,]+ characters long, over the limit of 1,000,000; the file is refused\. Nothing was loaded\.$/);
    expect(await tableChecksums()).toEqual(before);
  });

  it("duplicated rows: each repeat rejected naming the first line; the result equals the file without repeats", async () => {
    const imp = await importBytes(org, fixture("readings-duplicated-rows.csv"));
    expect(imp).toMatchObject({ status: "done", readingsLoaded: 2, rowsRejected: 2 });
    expect(imp.firstErrors).toEqual([
      { line: 4, value: "8.5", reason: "B1-I1-C01 dc_current at this timestamp was already given on line 2" },
      { line: 5, value: "8.75", reason: "B1-I1-C01 dc_current at this timestamp was already given on line 3" },
    ]);
    const after = await tableChecksums();
    // Importing the same rows once more changes nothing at all.
    const again = await importBytes(org, "timestamp,device,metric,value\n2026-08-01T12:00:00+02:00,B1-I1-C01,dc_current,8.5\n2026-08-01T12:05:00+02:00,B1-I1-C01,dc_current,8.75\n");
    expect(again.status).toBe("done");
    expect(await tableChecksums()).toEqual(after);
  });
});

function upload(name: string, bytes: Buffer, fields: Record<string, string>) {
  const fd = new FormData();
  for (const [k, v] of Object.entries(fields)) fd.append(k, v);
  fd.append("file", new File([new Uint8Array(bytes)], name, { type: "text/csv" }));
  return fd;
}

async function token(orgId: string) {
  const t = `ss_test_${crypto.randomUUID()}`;
  await db.insert(schema.apiTokens).values({ orgId, name: "hostile test", tokenHash: sha256(t), prefix: t.slice(0, 7), scopes: ["write"] });
  return t;
}

const LAYOUTS: [string, string[]][] = [
  ["layout-utf16le.csv", ["The layout was not imported: The file is UTF-16 text: save or export it as UTF-8 CSV. Nothing was changed."]],
  ["layout-latin1.csv", ["The layout was not imported: The file is not valid UTF-8 (byte 0xEE at byte 51): export it as UTF-8; it may be Latin-1 or Windows-1252. Nothing was changed."]],
  ["layout-formula-names.csv", ["The layout was not imported: 4 problems found. Nothing was changed.", "Line 2: The combiner name \"=HYPERLINK(\"http://evil.test\",\"open\")\" starts with =, which spreadsheets run as a formula; device names start with a letter or digit.", "Line 2: The combiner name \"=HYPERLINK(\"http://evil.test\",\"open\")\" holds a slash or backslash; device names cannot (findings name strings as combiner/string).", "Line 3: The combiner name \"@SUM(A1)\" starts with @, which spreadsheets run as a formula; device names start with a letter or digit.", "Line 4: The inverter name \"+cmd\" starts with +, which spreadsheets run as a formula; device names start with a letter or digit."]],
  ["layout-path-names.csv", ["The layout was not imported: 2 problems found. Nothing was changed.", "Line 2: The combiner name \"../../etc/passwd\" holds a slash or backslash; device names cannot (findings name strings as combiner/string).", "Line 3: The combiner name \"C:\\Windows\\C1\" holds a slash or backslash; device names cannot (findings name strings as combiner/string)."]],
  ["layout-truncated.csv", ["The layout was not imported: 1 problem found. Nothing was changed.", "Line 4: Expected 5 fields as in the header, found 3: the line looks truncated."]],
  ["layout-duplicated-rows.csv", ["The layout was not imported: 2 problems found. Nothing was changed.", "Line 4: Duplicate string: 1 of combiner B1-I1-C01 is already on line 2.", "Line 5: Duplicate string: 2 of combiner B1-I1-C01 is already on line 3."]],
  ["layout-header-only.csv", ["The layout was not imported: 1 problem found. Nothing was changed.", "Line 1: The file has a header but no string rows."]],
  ["layout-wrong-units.csv", ["The layout was not imported: 3 problems found. Nothing was changed.", "Line 2: Module count \"28 pcs\" is not a whole number.", "Line 2: x \"12 ft\" is not a number of metres.", "Line 2: y \"3 ft\" is not a number of metres."]],
  ["layout-png-renamed.csv", ["The layout was not imported: The file is a PNG image, not CSV text: choose the exported CSV file. Nothing was changed."]],
  ["layout-zip-renamed.csv", ["The layout was not imported: The file is a ZIP archive (an .xlsx workbook is one), not CSV text: export the sheet as CSV. Nothing was changed."]],
];

describe("hostile layouts", () => {
  let org: Org;
  let cookie: string | null;
  let bearer: string;
  beforeAll(async () => {
    org = await siteWithLayout("HostileLayout");
    cookie = (await signIn(org.people.engineer.email, org.password)).cookie;
    bearer = await token(org.org.id);
  });

  for (const [file, message] of LAYOUTS) {
    it(`${file}: the screen names the problem, the API refuses it, tables unchanged`, async () => {
      const before = await tableChecksums();
      const page = await http(`/sites/${org.site.id}/layout`, { cookie, body: upload(file, fixture(file), { intent: "preview" }) });
      expect(page.status).toBe(400);
      expect(alertLines(page.body)).toEqual(message);
      const api = await http(`/api/v1/sites/${org.site.id}/layout`, { headers: { authorization: `Bearer ${bearer}`, "content-type": "text/csv" }, body: new Uint8Array(fixture(file)) });
      expect(api.status).toBe(400);
      const body = api.json<{ error: string; errors?: { line: number; reason: string }[] }>();
      expect(body.errors ? [body.error, ...body.errors.map((e) => `Line ${e.line}: ${e.reason}`)] : [body.error]).toEqual(
        message.length > 1 ? ["The layout was not imported; nothing changed", ...message.slice(1)] : message,
      );
      expect(await tableChecksums()).toEqual(before);
    });
  }

  it("a 21 MB layout: refused by size, tables unchanged", async () => {
    const before = await tableChecksums();
    const big = Buffer.alloc(21 * 1024 * 1024, "B1,B1-I1,B1-I1-C01,1,28\n");
    const page = await http(`/sites/${org.site.id}/layout`, { cookie, body: upload("big.csv", big, { intent: "preview" }) });
    expect(page.status).toBe(400);
    expect(visible(page.body)).toContain("The file is 22.0 MB; a layout may be at most 20 MB.");
    expect(await tableChecksums()).toEqual(before);
  });
});

const FINDINGS: [string, string[]][] = [
  ["findings-utf16le.csv", ["The findings were not imported: The file is UTF-16 text: save or export it as UTF-8 CSV. Nothing was changed."]],
  ["findings-latin1.csv", ["The findings were not imported: The file is not valid UTF-8 (byte 0xFB at byte 81): export it as UTF-8; it may be Latin-1 or Windows-1252. Nothing was changed."]],
  ["findings-path-image.csv", ["The findings were not imported: 1 problem found. Nothing was changed.", "Line 2: image \"../../etc/passwd\" must be a file name without folders"]],
  ["findings-formula-string.csv", ["The findings were not imported: 1 problem found. Nothing was changed.", "Line 2: string \"=HYPERLINK(\"http://evil.test\",\"open\")\" must be written <combiner>/<string number>, e.g. B1-I2-C04/7"]],
  ["findings-wrong-units.csv", ["The findings were not imported: 2 problems found. Nothing was changed.", "Line 2: delta_t_k \"39 °F\" must be a temperature difference in kelvin (−50…200)", "Line 3: delta_t_k \"300\" must be a temperature difference in kelvin (−50…200)"]],
  ["findings-truncated.csv", ["The findings were not imported: 1 problem found. Nothing was changed.", "Line 3: unknown class \"string off\""]],
  ["findings-header-only.csv", ["The findings were not imported: 1 problem found. Nothing was changed.", "Line 2: the file has a header but no findings"]],
  ["findings-zip-renamed.csv", ["The findings were not imported: The file is a ZIP archive (an .xlsx workbook is one), not CSV text: export the sheet as CSV. Nothing was changed."]],
];

describe("hostile findings files", () => {
  let p: Awaited<ReturnType<typeof plantWithFlag>>;
  let flightId: string;
  let cookie: string | null;
  beforeAll(async () => {
    p = await plantWithFlag("HostileFindings");
    flightId = (await insertFlight(p.siteId, [p.blocks[0]!.id])).id;
    cookie = (await signIn(p.people.pilot.email, p.password)).cookie;
  });

  for (const [file, message] of FINDINGS) {
    it(`${file}: refused with its reason, tables unchanged`, async () => {
      const before = await tableChecksums();
      const page = await http(`/sites/${p.siteId}/flights/${flightId}`, { cookie, body: upload(file, fixture(file), { intent: "import" }) });
      expect(page.status).toBe(400);
      expect(alertLines(page.body)).toEqual(message);
      expect(await tableChecksums()).toEqual(before);
    });
  }
});

describe("hostile images", () => {
  let p: Awaited<ReturnType<typeof plantWithFlag>>;
  let flightId: string;
  beforeAll(async () => {
    p = await plantWithFlag("HostileImages");
    flightId = (await insertFlight(p.siteId, [p.blocks[0]!.id])).id;
    const csv = "string,class,delta_t_k,image,notes\n" + ["image-text-renamed.png", "image-jpeg-named-png.png", "image-html-renamed.jpg", "image-truncated.png", "image-script.svg", "image-ok.png"].map((n, i) => `B1-I1-C01/${i + 1},string offline,4.0,${n},`).join("\n") + "\n";
    const { importFindingsCsv } = await import("../../app/models/findings.server");
    expect((await importFindingsCsv({ orgId: p.org.id, userId: null }, p.siteId, flightId, csv)).ok).toBe(true);
  });

  /** The browser's path: presign, PUT straight to the store, confirm. */
  async function send(name: string, type: string) {
    const bytes = fixture(name);
    const pre = await presignImages(p.siteId, flightId, [{ name, size: bytes.length, type }]);
    for (const u of pre.uploads) {
      const put = await fetch(u.url, { method: "PUT", body: new Uint8Array(bytes), headers: { "content-type": type } });
      expect(put.status).toBe(200);
    }
    const conf = await confirmImages(p.siteId, flightId, pre.uploads.map((u) => u.imageId));
    return { pre, conf };
  }

  const CASES: [string, string, string][] = [
    ["image-text-renamed.png", "image/png", "image-text-renamed.png is not a picture (its content is not PNG, JPEG, WebP or TIFF); it was not kept."],
    ["image-html-renamed.jpg", "image/jpeg", "image-html-renamed.jpg is not a picture (its content is not PNG, JPEG, WebP or TIFF); it was not kept."],
    ["image-truncated.png", "image/png", "image-truncated.png is not a picture (its content is not PNG, JPEG, WebP or TIFF); it was not kept."],
    ["image-jpeg-named-png.png", "image/png", "image-jpeg-named-png.png is a JPEG picture, not PNG as its name says; rename it and upload it again."],
  ];
  for (const [name, type, message] of CASES) {
    it(`${name}: refused after upload by its first bytes, tables unchanged`, async () => {
      const before = await tableChecksums();
      const { pre, conf } = await send(name, type);
      expect(pre.uploads).toHaveLength(1);
      expect(conf).toEqual({ confirmed: 0, missing: 0, refused: [message] });
      expect(await tableChecksums()).toEqual(before);
    });
  }

  it("image-script.svg: refused before upload (SVG can carry script), tables unchanged", async () => {
    const before = await tableChecksums();
    const { pre } = await send("image-script.svg", "image/svg+xml");
    expect(pre).toEqual({ uploads: [], unmatched: [], refused: ["image-script.svg"] });
    expect(await tableChecksums()).toEqual(before);
  });

  it("a real PNG is kept", async () => {
    const { conf } = await send("image-ok.png", "image/png");
    expect(conf).toEqual({ confirmed: 1, missing: 0, refused: [] });
  });
});


