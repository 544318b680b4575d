/**
 * CSV cells for every export (flags, recovery, reject reports). Spreadsheet programs run a cell
 * that starts with = + - @ (or a tab / carriage return that hides one) as a formula, which can
 * open links or run commands on the reader's machine ("CSV Injection", OWASP community page,
 * from memory): such text cells get a leading apostrophe, which the spreadsheet shows as text.
 * Numbers are written as numbers, also when already formatted as text ("-1.50"): a plain
 * negative number is data, not a formula. Cells holding the
 * delimiter, a quote or a line break are quoted (RFC 4180, 2005).
 */
export type CsvValue = string | number | null | undefined;

const FORMULA_START = /^[=+\-@\t\r]/;
const PLAIN_NUMBER = /^-?\d+(\.\d+)?$/;

export function csvCell(v: CsvValue): string {
  let s = v == null ? "" : String(v);
  if (typeof v === "string" && FORMULA_START.test(s) && !PLAIN_NUMBER.test(s)) s = `'${s}`;
  return /[",;\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** One CSV line (no line ending). */
export function csvLine(cells: readonly CsvValue[]): string {
  return cells.map(csvCell).join(",");
}

/** CSV text, CRLF line endings (RFC 4180), ending with a line break. */
export function toCsv(rows: readonly (readonly CsvValue[])[]): string {
  return rows.map(csvLine).join("\r\n") + "\r\n";
}
