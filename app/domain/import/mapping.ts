import { z } from "zod";
import { CANONICAL_UNIT, METRICS, METRICS_BY_KIND, METRIC_QUANTITY, type Device, type Metric } from "./metrics";
import { guessColumn, indexDevices } from "./header-match";
import { UNIT_CODES, unitQuantity, type Unit } from "./units";

/**
 * The column mapping of a production export: plain JSON, so it can be stored with an import and
 * saved as a named template. Columns are matched by header text, not position, when a template
 * is applied to another file.
 */

export interface MappedColumn {
  header: string;
  device: string;
  metric: Metric;
  unit: Unit;
  note?: string;
}

export interface IgnoredColumn {
  header: string;
  ignore: true;
  note?: string;
}

export type WideColumn = MappedColumn | IgnoredColumn;

export interface WideMapping {
  format: "wide";
  /** Column holding the timestamp (or the date, when `timeColumn` holds the time of day). */
  timestampColumn: number;
  timeColumn?: number;
  /** One entry per header, in file order; the timestamp column(s) are ignored entries. */
  columns: WideColumn[];
}

/** `timestamp,device,metric,value` in any column order; values are already canonical. */
export interface LongMapping {
  format: "long";
  timestampColumn: number;
  deviceColumn: number;
  metricColumn: number;
  valueColumn: number;
  columnCount: number;
}

export type Mapping = WideMapping | LongMapping;

const index = z.number().int().min(0);
const wideColumnSchema = z.union([
  z.object({
    header: z.string(),
    device: z.string().min(1),
    metric: z.enum(METRICS),
    unit: z.enum(UNIT_CODES as [Unit, ...Unit[]]),
    note: z.string().optional(),
  }),
  z.object({ header: z.string(), ignore: z.literal(true), note: z.string().optional() }),
]);

/** Validates a mapping read back from storage or sent by the review form. */
export const mappingSchema = z.discriminatedUnion("format", [
  z.object({
    format: z.literal("wide"),
    timestampColumn: index,
    timeColumn: index.optional(),
    columns: z.array(wideColumnSchema),
  }),
  z.object({
    format: z.literal("long"),
    timestampColumn: index,
    deviceColumn: index,
    metricColumn: index,
    valueColumn: index,
    columnCount: z.number().int().min(4),
  }),
]);

export function isMapped(c: WideColumn): c is MappedColumn {
  return !("ignore" in c);
}

const norm = (h: string) => h.trim().toLowerCase().replace(/[\s_-]+/g, " ");
const LONG_NAMES = {
  timestamp: /^(timestamp|time stamp|datetime|date time|time|ts)$/,
  device: /^(device|device name|equipment|tag)$/,
  metric: /^(metric|variable|signal|measurement)$/,
  value: /^(value|val|reading)$/,
};

function findLong(headers: string[]): LongMapping | null {
  const n = headers.map(norm);
  const at = (re: RegExp) => n.findIndex((h) => re.test(h));
  const cols = [at(LONG_NAMES.timestamp), at(LONG_NAMES.device), at(LONG_NAMES.metric), at(LONG_NAMES.value)];
  if (cols.some((c) => c < 0)) return null;
  const [timestampColumn, deviceColumn, metricColumn, valueColumn] = cols;
  return { format: "long", timestampColumn, deviceColumn, metricColumn, valueColumn, columnCount: headers.length };
}

/** Long when the header has timestamp, device, metric and value columns; wide otherwise. */
export function detectFormat(headers: string[]): "long" | "wide" {
  return findLong(headers) ? "long" : "wide";
}

/** Timestamp column of a wide export, with a separate time-of-day column when date and time are split. */
export function findTimestampColumns(headers: string[]): { timestampColumn: number; timeColumn?: number } {
  const n = headers.map(norm);
  const full = n.findIndex((h) => /^(timestamp|time stamp|datetime|date time|date and time|date\/time|ts|local time|utc time)\b/.test(h));
  if (full >= 0) return { timestampColumn: full };
  const date = n.findIndex((h) => /^date\b/.test(h));
  const time = n.findIndex((h) => /^time\b/.test(h));
  if (date >= 0 && time >= 0) return { timestampColumn: date, timeColumn: time };
  if (time >= 0) return { timestampColumn: time };
  if (date >= 0) return { timestampColumn: date };
  return { timestampColumn: 0 };
}

/** A first mapping proposal from the headers alone, for the engineer to correct. */
export function proposeMapping(headers: string[], devices: Device[]): Mapping {
  const long = findLong(headers);
  if (long) return long;
  const ts = findTimestampColumns(headers);
  const idx = indexDevices(devices);
  const columns = headers.map((header, i): WideColumn => {
    if (i === ts.timestampColumn || i === ts.timeColumn) return { header, ignore: true, note: "timestamp" };
    const g = guessColumn(header, idx);
    if (g.device && g.metric && (!g.unit || unitQuantity(g.unit) === METRIC_QUANTITY[g.metric]))
      return { header, device: g.device, metric: g.metric, unit: g.unit ?? CANONICAL_UNIT[g.metric], ...(g.note ? { note: g.note } : {}) };
    return { header, ignore: true, ...(g.note ? { note: g.note } : {}) };
  });
  return { format: "wide", ...ts, columns };
}

export interface TemplateFit {
  mapping: Mapping;
  /** Headers of the file the template does not know: proposed afresh, to be reviewed. */
  newHeaders: string[];
  /** Template headers missing from the file. */
  missingHeaders: string[];
}

/**
 * Applies a saved template to a file's headers by header text. When both lists in the result
 * are empty the template fits and the import can run without review.
 */
export function applyTemplate(template: Mapping, headers: string[], devices: Device[]): TemplateFit {
  if (template.format === "long") {
    const long = findLong(headers);
    return long ? { mapping: long, newHeaders: [], missingHeaders: [] } : { mapping: proposeMapping(headers, devices), newHeaders: headers, missingHeaders: [] };
  }
  const pool = new Map<string, WideColumn[]>();
  for (const c of template.columns) pool.set(c.header.trim(), [...(pool.get(c.header.trim()) ?? []), c]);
  const tsHeader = template.columns[template.timestampColumn]?.header.trim();
  const timeHeader = template.timeColumn === undefined ? undefined : template.columns[template.timeColumn]?.header.trim();
  const fresh = proposeMapping(headers, devices) as WideMapping;
  const newHeaders: string[] = [];
  const columns = headers.map((h, i) => {
    const c = pool.get(h.trim())?.shift();
    if (c) return { ...c, header: h };
    newHeaders.push(h);
    return fresh.format === "wide" ? fresh.columns[i] : ({ header: h, ignore: true } as IgnoredColumn);
  });
  const missingHeaders = [...pool.values()].flat().map((c) => c.header);
  const find = (name: string | undefined) => (name === undefined ? -1 : headers.findIndex((h) => h.trim() === name));
  const timestampColumn = find(tsHeader) >= 0 ? find(tsHeader) : fresh.timestampColumn;
  const timeColumn = find(timeHeader);
  return {
    mapping: { format: "wide", timestampColumn, ...(timeColumn >= 0 ? { timeColumn } : {}), columns },
    newHeaders,
    missingHeaders,
  };
}

/** Problems that stop an import from running with this mapping (empty when it can run). */
export function validateMapping(mapping: Mapping, headers: string[], devices: Device[]): string[] {
  const errors: string[] = [];
  const n = headers.length;
  const inRange = (i: number | undefined, what: string) => {
    if (i !== undefined && (i < 0 || i >= n)) errors.push(`The ${what} column ${i + 1} is outside the file's ${n} columns.`);
  };
  if (mapping.format === "long") {
    inRange(mapping.timestampColumn, "timestamp");
    inRange(mapping.deviceColumn, "device");
    inRange(mapping.metricColumn, "metric");
    inRange(mapping.valueColumn, "value");
    if (mapping.columnCount !== n) errors.push(`The mapping expects ${mapping.columnCount} columns; the file has ${n}.`);
    return errors;
  }
  inRange(mapping.timestampColumn, "timestamp");
  inRange(mapping.timeColumn, "time");
  if (mapping.columns.length !== n) errors.push(`The mapping has ${mapping.columns.length} columns; the file has ${n}.`);
  const kinds = new Map(devices.map((d) => [d.name, d.kind]));
  const seen = new Map<string, string>();
  mapping.columns.forEach((c) => {
    if (!isMapped(c)) return;
    const kind = kinds.get(c.device);
    if (!kind) errors.push(`Column "${c.header}": device ${c.device} is not in the layout or the site's weather stations.`);
    else if (!METRICS_BY_KIND[kind].includes(c.metric)) errors.push(`Column "${c.header}": ${c.metric} is not a metric of a ${kind}.`);
    if (unitQuantity(c.unit) !== METRIC_QUANTITY[c.metric]) errors.push(`Column "${c.header}": unit ${c.unit} does not fit ${c.metric}.`);
    const key = `${c.device}|${c.metric}`;
    const first = seen.get(key);
    if (first !== undefined) errors.push(`Columns "${first}" and "${c.header}" both hold ${c.metric} of ${c.device}.`);
    else seen.set(key, c.header);
  });
  if (!mapping.columns.some(isMapped)) errors.push("No column is mapped to a device and metric.");
  return errors;
}
