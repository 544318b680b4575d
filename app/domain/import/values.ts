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
  const t = text.trim();
  if (MISSING_WORDS.has(t.toLowerCase())) return { kind: "missing" };
  const s = decimal === "," ? t.replace(",", ".") : t;
  if (!NUMBER.test(s)) return { kind: "invalid" };
  const value = Number(s);
  if (!Number.isFinite(value)) return { kind: "invalid" };
  return sentinels.includes(value) ? { kind: "missing" } : { kind: "number", value };
}
