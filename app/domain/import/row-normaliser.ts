import { DEFAULT_LIMITS, METRICS, METRICS_BY_KIND, isMetric, unitLabel, CANONICAL_UNIT, type Device, type DeviceKind, type Limits, type Metric } from "./metrics";
import { isMapped, type Mapping, type MappedColumn } from "./mapping";
import { isValidTimeZone, parseTimestamp, type DateOrder, type TimestampResult } from "./timestamps";
import { toIntervalStart, type Convention } from "./interval";
import { parseCell, DEFAULT_SENTINELS, type DecimalSeparator } from "./values";
import { createDuplicateTracker, type SeriesLines } from "./duplicates";
import { toCanonical, type Unit } from "./units";

/**
 * Turns one parsed CSV row into canonical readings, or into rejects that name the line and why.
 * Keeps only counters, a bounded timestamp cache and the duplicate tracker, so a streaming
 * importer can feed it a file of any length.
 */

export interface Reading {
  /** Interval start, epoch ms (UTC). */
  ts: number;
  device: string;
  metric: Metric;
  /** Canonical unit of the metric (A, V, W, W/m², °C, m/s). */
  value: number;
}

export type RejectCode =
  | "line-too-long"
  | "field-count"
  | "timestamp-invalid"
  | "timestamp-ambiguous"
  | "timestamp-nonexistent"
  | "timestamp-date-order"
  | "timestamp-implausible"
  | "unknown-device"
  | "unknown-metric"
  | "metric-not-for-device"
  | "not-a-number"
  | "out-of-range"
  | "duplicate";

export interface Reject {
  line: number;
  column?: string;
  value?: string;
  code: RejectCode;
  reason: string;
}

export interface RowResult {
  readings: Reading[];
  rejects: Reject[];
  /** Set when the whole file must be refused (a line over the length limit). */
  fatal?: Reject;
}

export interface RowNormaliserOptions {
  mapping: Mapping;
  /** Site's IANA zone, for timestamps without an offset. */
  zone: string;
  convention: Convention;
  intervalSeconds: number;
  /** Layout combiners and inverters plus the site's weather stations. */
  devices: Device[];
  /** Characters; default 1,000,000. */
  maxLineLength?: number;
  dateOrder?: DateOrder;
  decimalSeparator?: DecimalSeparator;
  sentinels?: readonly number[];
  limits?: Partial<Record<Metric, Limits>>;
  /** Default true; false leaves repeats to the database's unique key (see duplicates.ts). */
  trackDuplicates?: boolean;
}

export interface ImportSummary {
  /** Data lines seen (header excluded), blank ones included. */
  lines: number;
  blankLines: number;
  /** Lines that gave no reading because of a reject (not because every value was missing). */
  rejectedLines: number;
  readings: number;
  /** Cells that held a no-data marker (empty, NaN, −9999, −7999…): counted, not rejected. */
  missingValues: number;
  missingBySeries: Record<string, number>;
  rejectsByCode: Partial<Record<RejectCode, number>>;
  minTs: number | null;
  maxTs: number | null;
  devicesSeen: string[];
}

// Epoch-zero and year-9999 placeholders are data errors, not plant history.
const EARLIEST = Date.UTC(2000, 0, 1);
const LATEST = Date.UTC(2100, 0, 1);
const TS_CACHE_MAX = 4096;
// Distinct raw device / metric texts remembered for long files (a hostile file may invent many).
const NAME_CACHE_MAX = 10_000;

/** One device + metric series, looked up once and then reused for each of its values. */
interface Series {
  device: string;
  metric: Metric;
  /** `device|metric`, the key of missingBySeries. */
  key: string;
  /** This series' duplicate tracker (null when tracking is off). */
  lines: SeriesLines | null;
}

interface KnownDevice {
  name: string;
  kind: DeviceKind;
  series: Partial<Record<Metric, Series>>;
}

/** A copy that shares no memory with `text`: a field is a slice of the parser's whole chunk. */
function detached(text: string): string {
  return (" " + text).slice(1);
}

const TS_CODES: Record<Exclude<TimestampResult, { ok: true }>["reason"], RejectCode> = {
  invalid: "timestamp-invalid",
  ambiguous: "timestamp-ambiguous",
  nonexistent: "timestamp-nonexistent",
  "date-order": "timestamp-date-order",
};

function fmt(v: number): string {
  return String(Math.round(v * 1000) / 1000);
}

export function createRowNormaliser(opts: RowNormaliserOptions) {
  const { mapping, zone, convention, intervalSeconds } = opts;
  // Settings are validated upstream; a bad zone here is a programming error, not a data error.
  if (!isValidTimeZone(zone)) throw new Error(`Unknown time zone ${zone}`);
  if (!(intervalSeconds > 0)) throw new Error(`Interval must be positive, got ${intervalSeconds}`);
  const maxLineLength = opts.maxLineLength ?? 1_000_000;
  const decimal = opts.decimalSeparator ?? ".";
  const sentinels = opts.sentinels ?? DEFAULT_SENTINELS;
  const limits = { ...DEFAULT_LIMITS, ...opts.limits };
  const expectedFields = mapping.format === "wide" ? mapping.columns.length : mapping.columnCount;
  const kinds = new Map(opts.devices.map((d) => [d.name, d.kind]));
  const byLowerName = new Map(opts.devices.map((d) => [d.name.trim().toLowerCase(), d.name]));
  const dupes = opts.trackDuplicates === false ? null : createDuplicateTracker(intervalSeconds);
  const tsCache = new Map<string, TimestampResult>();
  const known = new Map<string, KnownDevice>(opts.devices.map((d) => [d.name, { name: d.name, kind: d.kind, series: {} }]));
  function seriesOf(d: KnownDevice, metric: Metric): Series {
    let x = d.series[metric];
    if (!x) {
      const key = `${d.name}|${metric}`;
      x = d.series[metric] = { device: d.name, metric, key, lines: dupes ? dupes.series(key) : null };
    }
    return x;
  }
  const wideColumns =
    mapping.format === "wide"
      ? mapping.columns
          .map((c, i) => ({ c, i }))
          .filter((x): x is { c: MappedColumn; i: number } => isMapped(x.c))
          .map(({ c, i }) => {
            const d = known.get(c.device);
            // validateMapping refuses a mapping to a device outside the layout before this runs.
            return { c, i, series: d ? seriesOf(d, c.metric) : { device: c.device, metric: c.metric, key: `${c.device}|${c.metric}`, lines: dupes ? dupes.series(`${c.device}|${c.metric}`) : null } };
          })
      : [];
  // Long files name the device and metric on every line: resolve each distinct raw text once.
  const rawDevices = new Map<string, KnownDevice | null>();
  const rawMetrics = new Map<string, Metric | null>();
  function deviceFor(raw: string): KnownDevice | null {
    let d = rawDevices.get(raw);
    if (d === undefined) {
      const t = raw.trim();
      const name = kinds.has(t) ? t : byLowerName.get(t.toLowerCase());
      d = name === undefined ? null : known.get(name)!;
      if (rawDevices.size >= NAME_CACHE_MAX) rawDevices.clear();
      rawDevices.set(detached(raw), d);
    }
    return d;
  }
  function metricFor(raw: string): Metric | null {
    let m = rawMetrics.get(raw);
    if (m === undefined) {
      const t = raw.trim().toLowerCase();
      // The shared constant, not the lower-cased copy: it is a property key on every value.
      m = isMetric(t) ? METRICS[METRICS.indexOf(t)] : null;
      if (rawMetrics.size >= NAME_CACHE_MAX) rawMetrics.clear();
      rawMetrics.set(detached(raw), m);
    }
    return m;
  }

  const s: ImportSummary = {
    lines: 0, blankLines: 0, rejectedLines: 0, readings: 0, missingValues: 0,
    missingBySeries: {}, rejectsByCode: {}, minTs: null, maxTs: null, devicesSeen: [],
  };
  const devicesSeen = new Set<string>();

  function timestamp(text: string): TimestampResult {
    let r = tsCache.get(text);
    if (!r) {
      // Long files repeat each timestamp once per device and metric: cache, but bounded.
      if (tsCache.size >= TS_CACHE_MAX) tsCache.clear();
      r = parseTimestamp(text, zone, { dateOrder: opts.dateOrder });
      tsCache.set(text, r);
    }
    return r;
  }

  /** One value → a reading, a reject, or null for a no-data marker. */
  function value(line: number, ts: number, series: Series, raw: string, unit: Unit, column: string | undefined): Reading | Reject | null {
    const cell = parseCell(raw, decimal, sentinels);
    const { device, metric, key } = series;
    if (cell.kind === "missing") {
      s.missingValues++;
      s.missingBySeries[key] = (s.missingBySeries[key] ?? 0) + 1;
      return null;
    }
    if (cell.kind === "invalid")
      return { line, ...where(column), value: raw, code: "not-a-number", reason: `"${raw}" is not a number` };
    const v = unit === CANONICAL_UNIT[metric] ? cell.value : toCanonical(cell.value, unit);
    const lim = limits[metric];
    if (v < lim.min || v > lim.max) {
      const u = unitLabel(CANONICAL_UNIT[metric]);
      const side = v < lim.min ? `below the plausible minimum ${lim.min} ${u}` : `above the plausible maximum ${lim.max} ${u}`;
      const shown = unit === CANONICAL_UNIT[metric] ? `${fmt(v)} ${u}` : `${raw} ${unitLabel(unit)} = ${fmt(v)} ${u}`;
      return { line, ...where(column), value: raw, code: "out-of-range", reason: `${metric} ${shown} is ${side}` };
    }
    if (series.lines) {
      const first = series.lines.check(ts, line);
      if (first) return { line, ...where(column), value: raw, code: "duplicate", reason: `${device} ${metric} at this timestamp was already given on line ${first}` };
    }
    return { ts, device, metric, value: v };
  }

  function where(column: string | undefined): { column?: string } {
    return column === undefined ? {} : { column };
  }

  function reject(result: RowResult, r: Reject): RowResult {
    result.rejects.push(r);
    return result;
  }

  function row(fields: string[], line: number): RowResult {
    s.lines++;
    const out: RowResult = { readings: [], rejects: [] };
    if (fields.length === 1 && fields[0].trim() === "") {
      s.blankLines++;
      return out;
    }
    let length = fields.length - 1;
    for (const f of fields) length += f.length;
    if (length > maxLineLength) {
      out.fatal = { line, code: "line-too-long", reason: `line ${line} is ${length.toLocaleString("en")} characters long, over the limit of ${maxLineLength.toLocaleString("en")}; the file is refused` };
      return finish(reject(out, out.fatal));
    }
    if (fields.length !== expectedFields) {
      const hint = fields.length < expectedFields ? "the line looks truncated" : "a value may contain an unquoted delimiter";
      return finish(reject(out, { line, code: "field-count", reason: `expected ${expectedFields} fields as in the header, found ${fields.length}: ${hint}` }));
    }
    const tsText = mapping.format === "wide" && mapping.timeColumn !== undefined ? `${fields[mapping.timestampColumn].trim()} ${fields[mapping.timeColumn].trim()}` : fields[mapping.timestampColumn];
    const t = timestamp(tsText);
    if (!t.ok) return finish(reject(out, { line, value: tsText, code: TS_CODES[t.reason], reason: t.message }));
    if (t.epochMs < EARLIEST || t.epochMs >= LATEST)
      return finish(reject(out, { line, value: tsText, code: "timestamp-implausible", reason: `"${tsText.trim()}" is outside 2000–2099: a placeholder, not a reading time` }));
    const ts = toIntervalStart(t.epochMs, convention, intervalSeconds);

    if (mapping.format === "wide") {
      for (const { c, i, series } of wideColumns) collect(out, value(line, ts, series, fields[i], c.unit, c.header));
      return finish(out);
    }
    const device = deviceFor(fields[mapping.deviceColumn]);
    if (!device) {
      const rawDevice = fields[mapping.deviceColumn].trim();
      return finish(reject(out, { line, value: rawDevice, code: "unknown-device", reason: `unknown device "${rawDevice}": not in the layout nor a weather station of the site` }));
    }
    const metric = metricFor(fields[mapping.metricColumn]);
    if (!metric)
      return finish(reject(out, { line, value: fields[mapping.metricColumn], code: "unknown-metric", reason: `unknown metric "${fields[mapping.metricColumn].trim()}"` }));
    const { kind, name } = device;
    if (!METRICS_BY_KIND[kind].includes(metric))
      return finish(reject(out, { line, value: metric, code: "metric-not-for-device", reason: `${metric} is not a metric of ${kind} ${name}` }));
    collect(out, value(line, ts, seriesOf(device, metric), fields[mapping.valueColumn], CANONICAL_UNIT[metric], undefined));
    return finish(out);
  }

  function collect(out: RowResult, r: Reading | Reject | null) {
    if (!r) return;
    if ("code" in r) out.rejects.push(r);
    else out.readings.push(r);
  }

  function finish(out: RowResult): RowResult {
    for (const r of out.rejects) s.rejectsByCode[r.code] = (s.rejectsByCode[r.code] ?? 0) + 1;
    if (out.rejects.length && !out.readings.length) s.rejectedLines++;
    for (const r of out.readings) {
      s.readings++;
      if (s.minTs === null || r.ts < s.minTs) s.minTs = r.ts;
      if (s.maxTs === null || r.ts > s.maxTs) s.maxTs = r.ts;
      devicesSeen.add(r.device);
    }
    return out;
  }

  return {
    row,
    summary(): ImportSummary {
      return { ...s, missingBySeries: { ...s.missingBySeries }, rejectsByCode: { ...s.rejectsByCode }, devicesSeen: [...devicesSeen].sort() };
    },
  };
}
