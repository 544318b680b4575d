import Papa from "papaparse";
import { detectDelimiter, stripBom, type Delimiter } from "./file-checks";
import { applyTemplate, detectFormat, findTimestampColumns, proposeMapping, type Mapping, type TemplateFit } from "./mapping";
import { detectUnit } from "./units";
import { detectDateOrder, parseTimestamp, type DateOrder } from "./timestamps";
import { detectInterval, type IntervalResult } from "./interval";
import type { DecimalSeparator } from "./values";
import type { Device } from "./metrics";

/**
 * First look at the start of a production export, before streaming it: delimiter, headers,
 * format, a mapping (proposed, or a saved template applied), date order, decimal separator and
 * interval. Everything the review screen shows and `createRowNormaliser` needs.
 */

export interface InspectOptions {
  devices: Device[];
  zone: string;
  /** False when the sample is only the start of the file (its last line may be cut). */
  isComplete: boolean;
  template?: Mapping;
  dateOrder?: DateOrder;
  /** Rows of the sample to look at; default 2,000. */
  maxRows?: number;
}

export type Inspection =
  | {
      ok: true;
      delimiter: Delimiter;
      decimalSeparator: DecimalSeparator;
      /** Header as the mapping sees it (units from a units row appended as "[unit]"). */
      headers: string[];
      /** Lines before the data: 1, or 2 when a row of units follows the header. */
      headerLines: 1 | 2;
      mapping: Mapping;
      /** Set when a template was given: what did not fit it. */
      templateFit?: Omit<TemplateFit, "mapping">;
      dateOrder: DateOrder | null;
      interval: IntervalResult;
      sampleRows: string[][];
    }
  | { ok: false; line: number; reason: string };

export function inspectSample(sample: string, opts: InspectOptions): Inspection {
  const text = stripBom(sample);
  if (text.trim() === "") return { ok: false, line: 1, reason: "The file is empty." };
  const delimiter = detectDelimiter(text);
  // The whole sample is parsed (it is at most a few hundred KB), but only its first rows are
  // looked at, except for a long file's timestamps: a long export repeats each timestamp once per
  // device and metric, so 2,000 rows of a 1,000-combiner plant hold only two distinct timestamps,
  // too few to tell the interval.
  const all = Papa.parse<string[]>(text, { delimiter, skipEmptyLines: false }).data;
  const maxRows = (opts.maxRows ?? 2000) + 1;
  const rows = all.length > maxRows ? all.slice(0, maxRows) : all;
  if (!opts.isComplete && rows.length > 2) rows.pop();
  let headers = rows[0].map((h) => h.trim());
  if (headers.length < 2)
    return {
      ok: false,
      line: 1,
      reason: `The header has a single column ("${headers[0].slice(0, 60)}"): the delimiter is not a comma, semicolon, tab or pipe.`,
    };
  const units = unitsRow(headers, rows[1]);
  let headerLines: 1 | 2 = 1;
  if (units) {
    headers = headers.map((h, i) => (units[i] ? `${h} [${units[i]}]` : h));
    headerLines = 2;
  }
  const data = rows.slice(headerLines).filter((r) => !(r.length === 1 && r[0].trim() === ""));
  if (data.length === 0 && opts.isComplete) return { ok: false, line: 1, reason: "The file has a header but no data rows." };

  let mapping: Mapping;
  let templateFit: Omit<TemplateFit, "mapping"> | undefined;
  if (opts.template) {
    const fit = applyTemplate(opts.template, headers, opts.devices);
    mapping = fit.mapping;
    templateFit = { newHeaders: fit.newHeaders, missingHeaders: fit.missingHeaders };
  } else mapping = proposeMapping(headers, opts.devices);

  const tsOf = (r: string[]) =>
    mapping.format === "wide" && mapping.timeColumn !== undefined
      ? `${r[mapping.timestampColumn] ?? ""} ${r[mapping.timeColumn] ?? ""}`
      : (r[mapping.timestampColumn] ?? "");
  const tsTexts = data.map(tsOf);
  if (mapping.format === "long" && all.length > rows.length) {
    // Every complete line of the sample (the last may be cut when the sample is not the whole file).
    const more = all.slice(rows.length, opts.isComplete ? all.length : all.length - 1);
    for (const r of more) if (!(r.length === 1 && r[0].trim() === "")) tsTexts.push(tsOf(r));
  }
  const dateOrder = opts.dateOrder ?? detectDateOrder(tsTexts);
  const epochs: number[] = [];
  for (const t of new Set(tsTexts)) {
    const r = parseTimestamp(t, opts.zone, { dateOrder: dateOrder ?? undefined });
    if (r.ok) epochs.push(r.epochMs);
  }

  return {
    ok: true,
    delimiter,
    decimalSeparator: guessDecimal(delimiter, data, mapping),
    headers,
    headerLines,
    mapping,
    ...(templateFit ? { templateFit } : {}),
    dateOrder,
    interval: detectInterval(epochs),
    sampleRows: data.slice(0, 20),
  };
}

/**
 * Some SCADA exports put the units on a second header line ("", "A", "kW", "W/m2"). Recognised
 * when the first data row has no timestamp and its other cells are units or blank.
 */
function unitsRow(headers: string[], row: string[] | undefined): string[] | null {
  if (!row || row.length !== headers.length || detectFormat(headers) === "long") return null;
  const { timestampColumn, timeColumn } = findTimestampColumns(headers);
  if (/\d/.test(row[timestampColumn] ?? "")) return null;
  const cells = row.map((c, i) => (i === timestampColumn || i === timeColumn ? "" : c.trim()));
  const filled = cells.filter((c) => c !== "");
  if (filled.length === 0 || !filled.every((c) => detectUnit(`[${c}]`))) return null;
  return cells;
}

/** Decimal comma only where the delimiter leaves room for it and values show it. */
function guessDecimal(delimiter: Delimiter, data: string[][], mapping: Mapping): DecimalSeparator {
  if (delimiter === ",") return ".";
  const valueCols =
    mapping.format === "long" ? [mapping.valueColumn] : mapping.columns.map((c, i) => ("ignore" in c ? -1 : i)).filter((i) => i >= 0);
  let comma = 0;
  let dot = 0;
  for (const r of data)
    for (const i of valueCols) {
      const v = (r[i] ?? "").trim();
      if (/^[+-]?\d+,\d+$/.test(v)) comma++;
      else if (/^[+-]?\d+\.\d+$/.test(v)) dot++;
    }
  return comma > dot ? "," : ".";
}
