import { describe, expect, it } from "vitest";
import { createLineLengthGuard, detectDelimiter, detectFileProblems, firstInvalidUtf8, stripBom } from "~/domain/import/file-checks";

const bytes = (s: string) => new TextEncoder().encode(s);

describe("detectFileProblems", () => {
  it("accepts UTF-8 text, with or without BOM, CRLF and non-ASCII", () => {
    expect(detectFileProblems(bytes("timestamp,B1-I1-C01 °C\r\n2026-06-01,1\r\n"))).toBeNull();
    expect(detectFileProblems(new Uint8Array([0xef, 0xbb, 0xbf, ...bytes("a,b\n1,2\n")]))).toBeNull();
  });
  it("does not blame a multi-byte character cut by the end of the sample", () => {
    const b = bytes("a,b °C");
    expect(detectFileProblems(b.subarray(0, b.length - 1))).toBeNull();
  });
  it("refuses empty files", () => {
    expect(detectFileProblems(new Uint8Array())).toBe("The file is empty.");
    expect(detectFileProblems(new Uint8Array([0xef, 0xbb, 0xbf, 0x0d, 0x0a]))).toBe("The file is empty.");
  });
  it("refuses binary files", () => {
    expect(detectFileProblems(new Uint8Array([0x61, 0x2c, 0x00, 0x62]))).toBe("The file is not text: it contains a NUL byte at byte 3.");
    expect(detectFileProblems(new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0x14]))).toBe(
      "The file is a ZIP archive (an .xlsx workbook is one), not CSV text: export the sheet as CSV.",
    );
    expect(detectFileProblems(new Uint8Array([0x1f, 0x8b, 0x08]))).toBe("The file is gzip-compressed, not CSV text: decompress it first.");
    expect(detectFileProblems(new Uint8Array([0xff, 0xfe, 0x61, 0x00]))).toBe("The file is UTF-16 text: save or export it as UTF-8 CSV.");
  });
  it("refuses invalid UTF-8 (e.g. a Latin-1 degree sign) in the first KB", () => {
    const latin1 = new Uint8Array([...bytes("Temp "), 0xb0, ...bytes("C\n")]);
    expect(detectFileProblems(latin1)).toBe(
      "The file is not valid UTF-8 (byte 0xB0 at byte 6): export it as UTF-8; it may be Latin-1 or Windows-1252.",
    );
    expect(firstInvalidUtf8(new Uint8Array([0xc0, 0x80]))).toBe(0); // overlong NUL
    expect(firstInvalidUtf8(new Uint8Array([0xed, 0xa0, 0x80]))).toBe(0); // surrogate
    expect(firstInvalidUtf8(bytes("ok €"))).toBe(-1);
  });
  it("looks only at the first KB", () => {
    const big = new Uint8Array(2048).fill(0x61);
    big[1500] = 0;
    expect(detectFileProblems(big)).toBeNull();
  });
});

describe("detectDelimiter", () => {
  it("finds comma, semicolon, tab and pipe", () => {
    expect(detectDelimiter("a,b,c\n1,2,3\n4,5,6\n")).toBe(",");
    expect(detectDelimiter("a;b;c\n1,5;2,5;3\n4;5;6\n")).toBe(";");
    expect(detectDelimiter("a\tb\tc\r\n1\t2\t3\r\n")).toBe("\t");
    expect(detectDelimiter("a|b\n1|2\n")).toBe("|");
  });
  it("ignores delimiters inside quotes", () => {
    expect(detectDelimiter('ts;"Power, AC (kW)";x\n1;"2,5";3\n4;5;6\n')).toBe(";");
    expect(detectDelimiter('ts,"a;b;c;d",x\n1,"2;3;4",5\n6,7,8\n')).toBe(",");
  });
  it("survives a BOM and a sample cut mid-line", () => {
    expect(detectDelimiter("\uFEFFa;b;c\n1;2;3\n4;5;6\n7;8")).toBe(";");
  });
  it("strips a BOM", () => {
    expect(stripBom("\uFEFFa,b")).toBe("a,b");
    expect(stripBom("a,b")).toBe("a,b");
  });
});

describe("createLineLengthGuard", () => {
  it("names the first line over the limit, across chunks and line endings", () => {
    const g = createLineLengthGuard(10);
    expect(g.push("short\r\nok\r")).toBeNull();
    expect(g.push("\nalso ok\n01234")).toBeNull();
    expect(g.push("56789")).toBeNull();
    expect(g.push("X")).toEqual({ line: 4, reason: "Line 4 is longer than 10 characters; the file is refused." });
  });
  it("speaks in the configured unit", () => {
    const g = createLineLengthGuard(1_000_000);
    expect(g.push("x".repeat(1_000_001))?.reason).toBe("Line 1 is longer than 1,000,000 characters; the file is refused.");
  });
});
