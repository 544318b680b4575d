/**
 * Calendar arithmetic in a site's IANA zone without a date library: offsets come from
 * Intl.DateTimeFormat through the importer's cached lookup.
 */
import { zoneOffsetMs } from "../app/domain/import/timestamps";

/**
 * Offset of the zone from UTC at an instant, in minutes (Madrid in summer: +120): the importer's
 * own lookup (app/domain/import/timestamps.ts), so the demo files and their reading agree.
 */
export function zoneOffsetMinutes(utcMs: number, zone: string): number {
  return Math.round(zoneOffsetMs(zone, utcMs) / 60_000);
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
