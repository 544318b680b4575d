/**
 * Timestamp parsing. Text with an offset (or Z) is an instant; text without one is a wall-clock
 * time in the site's IANA zone, resolved with the platform's time-zone database (Intl), and
 * refused, never guessed, when the clock change makes it repeat or skip.
 */

export type DateOrder = "DMY" | "MDY";

export type TimestampResult =
  | { ok: true; epochMs: number }
  | { ok: false; reason: "ambiguous" | "nonexistent" | "invalid" | "date-order"; message: string };

export interface ParseTimestampOptions {
  /** How to read `03/04/2026`; without it only dates that cannot be misread are accepted. */
  dateOrder?: DateOrder;
}

interface Wall {
  y: number;
  mo: number;
  d: number;
  h: number;
  mi: number;
  s: number;
  ms: number;
}

const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{1,2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?)?\s*(Z|[+-]\d{2}(?::?\d{2})?)?$/i;
const SLASHED = /^(\d{1,2})([/.-])(\d{1,2})\2(\d{4})(?:[T ]+(\d{1,2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?\s*([AP]M)?)?$/i;
const YMD_SLASHED = /^(\d{4})\/(\d{1,2})\/(\d{1,2})(?:[T ](\d{1,2}):(\d{2})(?::(\d{2}))?)?$/;

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatterFor(zone: string): Intl.DateTimeFormat {
  let f = formatters.get(zone);
  if (!f) {
    f = new Intl.DateTimeFormat("en-US", {
      timeZone: zone,
      hourCycle: "h23",
      year: "numeric",
      month: "numeric",
      day: "numeric",
      hour: "numeric",
      minute: "numeric",
      second: "numeric",
    });
    formatters.set(zone, f);
  }
  return f;
}

export function isValidTimeZone(zone: string): boolean {
  try {
    formatterFor(zone);
    return true;
  } catch {
    return false;
  }
}

const HOUR = 3_600_000;
const hourOffsets = new Map<string, number>();

function hourOffset(zone: string, hour: number): number {
  const key = `${zone}@${hour}`;
  let o = hourOffsets.get(key);
  if (o === undefined) {
    if (hourOffsets.size >= 100_000) hourOffsets.clear();
    o = exactOffsetMs(zone, hour * HOUR);
    hourOffsets.set(key, o);
  }
  return o;
}

/**
 * The zone's UTC offset in ms at an instant. Offsets are looked up once per UTC hour and cached:
 * when both ends of the hour agree there was no change inside it (no zone changes twice within
 * an hour), else the exact instant is asked. Intl is ~30 µs a call; files have millions of rows.
 */
export function zoneOffsetMs(zone: string, epochMs: number): number {
  const h = Math.floor(epochMs / HOUR);
  const a = hourOffset(zone, h);
  return a === hourOffset(zone, h + 1) ? a : exactOffsetMs(zone, epochMs);
}

/** The offset from the platform's time-zone database. */
function exactOffsetMs(zone: string, epochMs: number): number {
  const parts = formatterFor(zone).formatToParts(new Date(epochMs));
  const get = (t: string) => Number(parts.find((p) => p.type === t)?.value);
  const asUtc = Date.UTC(get("year"), get("month") - 1, get("day"), get("hour"), get("minute"), get("second"));
  return asUtc - Math.floor(epochMs / 1000) * 1000;
}

function formatOffset(ms: number): string {
  const sign = ms < 0 ? "-" : "+";
  const m = Math.abs(ms) / 60000;
  return `${sign}${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`;
}

function daysInMonth(y: number, mo: number): number {
  return new Date(Date.UTC(y, mo, 0)).getUTCDate();
}

function fraction(text: string | undefined): number {
  return text ? Math.round(Number(`0.${text}`) * 1000) : 0;
}

function invalid(text: string, why: string): TimestampResult {
  return { ok: false, reason: "invalid", message: `"${text}" is not a valid timestamp: ${why}` };
}

/** Checks ranges and turns the wall clock into "ms as if UTC"; 24:00 means next midnight. */
function wallToUtcMs(w: Wall, text: string): number | TimestampResult {
  if (w.mo < 1 || w.mo > 12) return invalid(text, `month ${w.mo} does not exist`);
  if (w.d < 1 || w.d > daysInMonth(w.y, w.mo)) return invalid(text, `day ${w.d} does not exist in that month`);
  const midnight24 = w.h === 24 && w.mi === 0 && w.s === 0 && w.ms === 0;
  if ((w.h > 23 && !midnight24) || w.mi > 59 || w.s > 59) return invalid(text, "the time of day is out of range");
  return Date.UTC(w.y, w.mo - 1, w.d, w.h, w.mi, w.s, w.ms);
}

/** Resolves a wall-clock time in `zone`; a wall time maps to 0, 1 or 2 instants. */
function resolveWall(wallMs: number, zone: string, text: string): TimestampResult {
  const day = 86_400_000;
  // Offsets a day either side cover the one transition that can touch this wall time.
  const offsets = new Set([zoneOffsetMs(zone, wallMs - day), zoneOffsetMs(zone, wallMs + day)]);
  const found: { t: number; o: number }[] = [];
  for (const o of offsets) {
    const t = wallMs - o;
    if (zoneOffsetMs(zone, t) === o) found.push({ t, o });
  }
  if (found.length === 1) return { ok: true, epochMs: found[0].t };
  const [before, after] = [...offsets].sort((a, b) => b - a);
  if (found.length === 0) {
    return {
      ok: false,
      reason: "nonexistent",
      message: `"${text}" does not exist in ${zone}: the clocks jump from ${formatOffset(Math.min(before, after))} to ${formatOffset(Math.max(before, after))} over that hour`,
    };
  }
  found.sort((a, b) => a.t - b.t);
  return {
    ok: false,
    reason: "ambiguous",
    message: `"${text}" happens twice in ${zone} (first at ${formatOffset(found[0].o)}, then at ${formatOffset(found[1].o)}): write it with its UTC offset`,
  };
}

/** Reads `DD/MM/YYYY` or `MM/DD/YYYY` (also with dots or dashes); null day/month when unsure. */
function readSlashed(m: RegExpMatchArray, opts: ParseTimestampOptions, text: string): Wall | TimestampResult {
  const a = Number(m[1]);
  const b = Number(m[3]);
  let order = opts.dateOrder;
  // Dots are a day-first convention everywhere they are used.
  if (m[2] === ".") order = "DMY";
  if (!order) {
    if (a > 12 && b <= 12) order = "DMY";
    else if (b > 12 && a <= 12) order = "MDY";
    else if (a === b) order = "DMY";
    else
      return {
        ok: false,
        reason: "date-order",
        message: `"${text}" could be day/month or month/day: choose the date order for this file`,
      };
  }
  const [d, mo] = order === "DMY" ? [a, b] : [b, a];
  let h = m[5] ? Number(m[5]) : 0;
  const ampm = m[9]?.toUpperCase();
  if (ampm) {
    if (h < 1 || h > 12) return invalid(text, "the hour is out of range for AM/PM");
    h = (h % 12) + (ampm === "PM" ? 12 : 0);
  }
  return { y: Number(m[4]), mo, d, h, mi: m[6] ? Number(m[6]) : 0, s: m[7] ? Number(m[7]) : 0, ms: fraction(m[8]) };
}

/**
 * Parses one timestamp. Accepted: ISO 8601 with `Z` or an offset (`+02:00`, `+0200`, `+02`);
 * local `YYYY-MM-DD HH:mm[:ss[.fff]]`, `YYYY-MM-DDTHH:mm`, `YYYY/MM/DD HH:mm`;
 * `DD/MM/YYYY HH:mm[:ss]` or `MM/DD/YYYY …` (optionally with AM/PM), read only when the day and
 * month cannot be swapped or `dateOrder` says which; `DD.MM.YYYY HH:mm`. `24:00` is next midnight.
 */
export function parseTimestamp(raw: string, zone: string, opts: ParseTimestampOptions = {}): TimestampResult {
  const text = raw.trim();
  if (text === "") return { ok: false, reason: "invalid", message: "the timestamp is empty" };
  let wall: Wall | TimestampResult;
  let offsetText: string | undefined;
  let m = ISO.exec(text);
  if (m) {
    wall = { y: +m[1], mo: +m[2], d: +m[3], h: m[4] ? +m[4] : 0, mi: m[5] ? +m[5] : 0, s: m[6] ? +m[6] : 0, ms: fraction(m[7]) };
    offsetText = m[8];
  } else if ((m = SLASHED.exec(text))) {
    wall = readSlashed(m, opts, text);
  } else if ((m = YMD_SLASHED.exec(text))) {
    wall = { y: +m[1], mo: +m[2], d: +m[3], h: m[4] ? +m[4] : 0, mi: m[5] ? +m[5] : 0, s: m[6] ? +m[6] : 0, ms: 0 };
  } else {
    return invalid(text, "expected e.g. 2026-03-29 14:15, 2026-03-29T14:15:00+02:00 or 29/03/2026 14:15");
  }
  if ("ok" in wall) return wall;
  const wallMs = wallToUtcMs(wall, text);
  if (typeof wallMs !== "number") return wallMs;
  if (offsetText) {
    if (offsetText.toUpperCase() === "Z") return { ok: true, epochMs: wallMs };
    const om = /^([+-])(\d{2}):?(\d{2})?$/.exec(offsetText)!;
    const minutes = Number(om[2]) * 60 + Number(om[3] ?? 0);
    if (Number(om[2]) > 18 || Number(om[3] ?? 0) > 59) return invalid(text, "the UTC offset is out of range");
    return { ok: true, epochMs: wallMs - (om[1] === "-" ? -1 : 1) * minutes * 60_000 };
  }
  return resolveWall(wallMs, zone, text);
}

/**
 * Date order of `NN/NN/YYYY` timestamps in a sample: DMY when some first number exceeds 12,
 * MDY when some second number does, null when the sample cannot tell (or contradicts itself).
 */
export function detectDateOrder(samples: string[]): DateOrder | null {
  let dmy = false;
  let mdy = false;
  for (const s of samples) {
    const m = SLASHED.exec(s.trim());
    if (!m || m[2] === ".") continue;
    if (Number(m[1]) > 12) dmy = true;
    if (Number(m[3]) > 12) mdy = true;
  }
  return dmy === mdy ? null : dmy ? "DMY" : "MDY";
}
