import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { parseLayoutCsv } from "~/domain/import/layout";

const fixture = (name: string) => readFileSync(new URL(`../../../fixtures/import/${name}`, import.meta.url), "utf8");
const HEADER = "block,inverter,combiner,string,modules,x,y\n";

describe("parseLayoutCsv: valid files", () => {
  it("gives rows, combiners and totals (CRLF, optional x/y)", () => {
    const r = parseLayoutCsv(fixture("layout-small.csv"));
    if (!r.ok) throw new Error(JSON.stringify(r.errors));
    expect(r.totals).toEqual({ blocks: 2, inverters: 3, combiners: 4, strings: 8, modules: 217 });
    expect(r.rows[0]).toEqual({ line: 2, block: "B1", inverter: "B1-I1", combiner: "B1-I1-C01", string: "S01", modules: 28, x: 10, y: 5 });
    expect(r.rows[4]).toMatchObject({ line: 6, combiner: "B1-I2-C01", x: null, y: null });
    expect(r.combiners.find((c) => c.name === "B2-I1-C01")).toEqual({ name: "B2-I1-C01", block: "B2", inverter: "B2-I1", strings: 3, modules: 78 });
    expect(r.warnings).toEqual([]);
  });
  it("accepts a semicolon file with BOM, header case and spacing, quoted values and no x/y", () => {
    const r = parseLayoutCsv('\uFEFFBlock; Inverter ;Combiner;String;Modules\n"B1";"B1-I1";"B1-I1-C01";"S 1, east";28\n');
    expect(r.ok && r.rows[0]).toMatchObject({ string: "S 1, east", modules: 28, x: null });
  });
  it("accepts an unchanged string count for a combiner with history, and warns about combiners left out", () => {
    const history = new Map([["B1-I1-C01", 2], ["B9-I9-C99", 12]]);
    const r = parseLayoutCsv(fixture("layout-small.csv"), { combinersWithHistory: history });
    expect(r.ok && r.warnings).toEqual([{ line: 0, reason: "Combiner B9-I9-C99 has production history but is not in this file; its history is kept." }]);
  });
});

describe("parseLayoutCsv: errors name the line and the reason", () => {
  it("refuses an empty file and a header without rows", () => {
    expect(parseLayoutCsv("")).toEqual({ ok: false, errors: [{ line: 1, reason: "The file is empty." }], errorCount: 1 });
    expect(parseLayoutCsv("\uFEFF \r\n")).toMatchObject({ ok: false, errors: [{ line: 1, reason: "The file is empty." }] });
    expect(parseLayoutCsv(HEADER + "\n")).toMatchObject({ ok: false, errors: [{ line: 1, reason: "The file has a header but no string rows." }] });
  });
  it("names missing columns", () => {
    expect(parseLayoutCsv("block,inverter,combiner\nB1,B1-I1,B1-I1-C01\n")).toMatchObject({
      ok: false,
      errors: [{ line: 1, reason: "Missing columns: string, modules. Expected the header block,inverter,combiner,string,modules (x,y optional)." }],
    });
  });
  it("reports each error of a bad file (fixture), in line order", () => {
    const r = parseLayoutCsv(fixture("layout-errors.csv"));
    expect(r).toEqual({
      ok: false,
      errorCount: 4,
      errors: [
        { line: 3, reason: "Duplicate string: S01 of combiner B1-I1-C01 is already on line 2." },
        { line: 4, reason: 'Module count "twenty" is not a whole number.' },
        { line: 5, reason: "Combiner B1-I1-C02 is already under inverter B1-I1 in block B1 (line 4); combiner names must be unique in the site." },
        { line: 6, reason: "Expected 5 fields as in the header, found 4: the line looks truncated." },
      ],
    });
  });
  it("refuses a string count change on a combiner with history", () => {
    const history = new Map([["B2-I1-C01", 4]]);
    expect(parseLayoutCsv(fixture("layout-small.csv"), { combinersWithHistory: history })).toEqual({
      ok: false,
      errorCount: 1,
      errors: [
        {
          line: 7,
          reason:
            "Combiner B2-I1-C01 has production history with 4 strings; this file gives it 3. Its past and new readings would no longer compare: keep 4 strings, or give the rewired combiner a new name.",
        },
      ],
    });
  });
  it("refuses an inverter in two blocks, empty names, bad counts and coordinates", () => {
    const text = HEADER + [
      "B1,I1,B1-I1-C01,S01,28,,",
      "B2,I1,B2-I1-C01,S01,28,,",
      "B1,,B1-I1-C02,S01,28,,",
      "B1,I1,B1-I1-C01,S02,0,,",
      "B1,I1,B1-I1-C01,S03,28.5,,",
      "B1,I1,B1-I1-C01,S04,28,12 m,3",
    ].join("\n");
    expect(parseLayoutCsv(text)).toMatchObject({
      ok: false,
      errors: [
        { line: 3, reason: "Inverter I1 is already in block B1 (line 2); inverter names must be unique in the site." },
        { line: 4, reason: "Empty inverter." },
        { line: 5, reason: "Module count 0 is outside 1–200." },
        { line: 6, reason: 'Module count "28.5" is not a whole number.' },
        { line: 7, reason: 'x "12 m" is not a number of metres.' },
      ],
    });
  });
  it("refuses a combiner named like an inverter", () => {
    const r = parseLayoutCsv(HEADER + "B1,B1-X,B1-X,S01,28,,\n");
    expect(r).toMatchObject({ ok: false, errors: [{ line: 2, reason: "Combiner B1-X has the same name as an inverter (line 2); device names must be unique." }] });
  });
  it("counts lines physically when a quoted value spans lines", () => {
    const r = parseLayoutCsv(HEADER + 'B1,B1-I1,B1-I1-C01,"S01\nnorth",28,,\nB1,B1-I1,B1-I1-C01,S02,x,,\n');
    expect(r).toMatchObject({ ok: false, errors: [{ line: 4, reason: 'Module count "x" is not a whole number.' }] });
  });
});
