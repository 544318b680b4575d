/** Reading one numeric cell: a number, a "no data" marker, or garbage. */

export type DecimalSeparator = "." | ",";

export type CellValue = { kind: "number"; value: number } | { kind: "missing" } | { kind: "invalid" };

/** Numbers SCADA systems write for "no data"; compared numerically, so -9999.0 counts too. */
export const DEFAULT_SENTINELS = [-9999, -7999] as const;

const MISSING_WORDS = new Set(["", "nan", "n/a", "na", "null", "none", "-", "--", "#n/a", "#value!", "nodata", "no data"]);
const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/**
 * Parses a cell. Plain decimal numbers only: no thousands separators, hex or Infinity, so that a
 * misread column fails loudly instead of importing wrong values.
 */
export function parseCell(
  text: string,
  decimal: DecimalSeparator = ".",
  sentinels: readonly number[] = DEFAULT_SENTINELS,
): CellValue {
  const plain = plainDecimal(text, decimal);
  if (plain !== null) return sentinels.includes(plain) ? { kind: "missing" } : { kind: "number", value: plain };
  const t = text.trim();
  if (MISSING_WORDS.has(t.toLowerCase())) return { kind: "missing" };
  const s = decimal === "," ? t.replace(",", ".") : t;
  if (!NUMBER.test(s)) return { kind: "invalid" };
  const value = Number(s);
  if (!Number.isFinite(value)) return { kind: "invalid" };
  return sentinels.includes(value) ? { kind: "missing" } : { kind: "number", value };
}

/**
 * The common case without the general path's trimming, lower-casing and regular expression:
 * an optional sign, digits and at most one point (`12`, `-3.25`, `.5`, `7.`). Anything else
 * (spaces, exponent, decimal comma, words) returns null and takes the general path.
 */
function plainDecimal(text: string, decimal: DecimalSeparator): number | null {
  const n = text.length;
  if (n === 0 || n > 24 || decimal !== ".") return null;
  let i = 0;
  const first = text.charCodeAt(0);
  if (first === 43 || first === 45) i = 1;
  let digits = 0;
  let point = false;
  for (; i < n; i++) {
    const c = text.charCodeAt(i);
    if (c >= 48 && c <= 57) digits++;
    else if (c === 46 && !point) point = true;
    else return null;
  }
  return digits === 0 ? null : Number(text);
}
