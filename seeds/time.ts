/**
 * Calendar arithmetic in a site's IANA zone without a date library: offsets come from
 * Intl.DateTimeFormat (cached per UTC day, see zoneOffsetMinutes).
 */

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatter(zone: string): Intl.DateTimeFormat {
  let f = formatters.get(zone);
  if (!f) {
    f = new Intl.DateTimeFormat("en-US", {
      timeZone: zone,
      hourCycle: "h23",
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
      hour: "2-digit",
      minute: "2-digit",
      second: "2-digit",
    });
    formatters.set(zone, f);
  }
  return f;
}

function rawOffset(utcMs: number, zone: string): number {
  const parts = formatter(zone).formatToParts(new Date(utcMs));
  const get = (t: string) => Number(parts.find((p) => p.type === t)?.value);
  const asUtc = Date.UTC(get("year"), get("month") - 1, get("day"), get("hour"), get("minute"), get("second"));
  return Math.round((asUtc - Math.floor(utcMs / 1000) * 1000) / 60_000);
}

const dayCache = new Map<string, { before: number; after: number; switchAt: number }>();

/**
 * Offset of the zone from UTC at an instant, in minutes (Madrid in summer: +120). Cached per
 * UTC day: the offsets at both ends of the day, and the minute of the change if they differ
 * (zones change at most once a day).
 */
export function zoneOffsetMinutes(utcMs: number, zone: string): number {
  const day = Math.floor(utcMs / 86_400_000);
  const key = `${zone}|${day}`;
  let c = dayCache.get(key);
  if (!c) {
    const a = day * 86_400_000;
    const b = a + 86_400_000 - 60_000;
    const before = rawOffset(a, zone);
    const after = rawOffset(b, zone);
    let switchAt = Infinity;
    if (before !== after) {
      let lo = a; // offset(lo) = before
      let hi = b; // offset(hi) = after
      while (hi - lo > 60_000) {
        const mid = lo + Math.floor((hi - lo) / 120_000) * 60_000;
        if (rawOffset(mid, zone) === before) lo = mid;
        else hi = mid;
      }
      switchAt = hi;
    }
    c = { before, after, switchAt };
    dayCache.set(key, c);
  }
  return utcMs < c.switchAt ? c.before : c.after;
}

const pad2 = (n: number) => (n < 10 ? `0${n}` : `${n}`);

/** ISO 8601 local time with offset, e.g. 2026-10-25T02:05:00+01:00. */
export function formatLocalIso(utcMs: number, zone: string): string {
  const off = zoneOffsetMinutes(utcMs, zone);
  const d = new Date(utcMs + off * 60_000);
  const sign = off < 0 ? "-" : "+";
  const a = Math.abs(off);
  return (
    `${d.getUTCFullYear()}-${pad2(d.getUTCMonth() + 1)}-${pad2(d.getUTCDate())}` +
    `T${pad2(d.getUTCHours())}:${pad2(d.getUTCMinutes())}:${pad2(d.getUTCSeconds())}` +
    `${sign}${pad2(Math.floor(a / 60))}:${pad2(a % 60)}`
  );
}

/** Local calendar date (YYYY-MM-DD) of an instant in the zone. */
export function localDate(utcMs: number, zone: string): string {
  return formatLocalIso(utcMs, zone).slice(0, 10);
}

/** Local clock time in fractional hours (e.g. 13.5 for 13:30) of an instant in the zone. */
export function localHour(utcMs: number, zone: string): number {
  const d = new Date(utcMs + zoneOffsetMinutes(utcMs, zone) * 60_000);
  return d.getUTCHours() + d.getUTCMinutes() / 60 + d.getUTCSeconds() / 3600;
}

/** The UTC instant of a local wall-clock time on a local date (first occurrence if repeated). */
export function localToUtc(date: string, zone: string, hour = 0, minute = 0): number {
  const [y, m, d] = date.split("-").map(Number);
  const wall = Date.UTC(y, m - 1, d, hour, minute);
  // two passes: offsets before and after the guess settle a transition
  let guess = wall - zoneOffsetMinutes(wall, zone) * 60_000;
  guess = wall - zoneOffsetMinutes(guess, zone) * 60_000;
  const earlier = wall - zoneOffsetMinutes(guess - 3_600_000, zone) * 60_000;
  if (earlier < guess && formatLocalIso(earlier, zone).slice(0, 16) === formatLocalIso(guess, zone).slice(0, 16)) return earlier;
  return guess;
}

/** Add days to a YYYY-MM-DD date (calendar arithmetic, zone-free). */
export function addDays(date: string, days: number): string {
  const [y, m, d] = date.split("-").map(Number);
  return new Date(Date.UTC(y, m - 1, d + days)).toISOString().slice(0, 10);
}

/** Whole days from a to b (YYYY-MM-DD). */
export function daysBetween(a: string, b: string): number {
  const [y1, m1, d1] = a.split("-").map(Number);
  const [y2, m2, d2] = b.split("-").map(Number);
  return Math.round((Date.UTC(y2, m2 - 1, d2) - Date.UTC(y1, m1 - 1, d1)) / 86_400_000);
}

/** Day of year (1–366) of a YYYY-MM-DD date. */
export function dayOfYear(date: string): number {
  const [y, m, d] = date.split("-").map(Number);
  return Math.round((Date.UTC(y, m - 1, d) - Date.UTC(y, 0, 1)) / 86_400_000) + 1;
}

/** Yesterday's local date in the zone, relative to `nowMs`. */
export function yesterdayIn(zone: string, nowMs = Date.now()): string {
  return addDays(localDate(nowMs, zone), -1);
}
