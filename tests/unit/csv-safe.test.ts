import { describe, expect, it } from "vitest";
import { csvCell, csvLine, toCsv } from "../../app/lib/csv-safe";

// OWASP "CSV Injection" (community page, from memory): cells starting with = + - @ (and tab or
// carriage return) are run as formulas by spreadsheet programs; prefix them with an apostrophe.
describe("csvCell", () => {
  it.each([
    ["=HYPERLINK(\"http://x.test\",\"click\")", "\"'=HYPERLINK(\"\"http://x.test\"\",\"\"click\"\")\""],
    ["+cmd|' /C calc'!A0", "'+cmd|' /C calc'!A0"],
    ["-2+3", "'-2+3"],
    ["@SUM(1+1)*cmd", "'@SUM(1+1)*cmd"],
    ["\t=1+1", "'\t=1+1"],
    ["\r=1+1", "\"'\r=1+1\""],
  ])("neutralises %j", (input, out) => {
    expect(csvCell(input)).toBe(out);
  });

  it("leaves ordinary text and numbers alone, negative numbers included", () => {
    expect(csvCell("B1-I1-C01")).toBe("B1-I1-C01");
    expect(csvCell(-3.5)).toBe("-3.5");
    expect(csvCell("-1.50")).toBe("-1.50");
    expect(csvCell("-1.5e3")).toBe("'-1.5e3");
    expect(csvCell(0)).toBe("0");
    expect(csvCell(null)).toBe("");
    expect(csvCell(undefined)).toBe("");
  });

  it("quotes delimiters, quotes and line breaks (RFC 4180)", () => {
    expect(csvCell("a,b")).toBe('"a,b"');
    expect(csvCell("a;b")).toBe('"a;b"');
    expect(csvCell('say "hi"')).toBe('"say ""hi"""');
    expect(csvCell("two\nlines")).toBe('"two\nlines"');
  });

  it("writes lines and files with CRLF", () => {
    expect(csvLine(["=1", 2, null])).toBe("'=1,2,");
    expect(toCsv([["a", "b"], ["@x", -1]])).toBe("a,b\r\n'@x,-1\r\n");
  });
});
