/**
 * Flight windows as a timeline: for each local day, 15-minute rows with the sun position, the
 * clear-sky POA on the site's mounting, whether the IR minimum can be met, whether the hour is
 * in the cooler morning (preferred for cell-level defects) and the camera headings that would
 * look into the sun's mirror reflection off the module plane.
 *
 * Clear-sky model: Haurwitz (1945) GHI = 1098 · cos Z · exp(−0.059 / cos Z) W/m² (coefficients
 * as given by Reno, Hansen & Stein, SAND2012-2389); Erbs, Klein & Duffie (1982) diffuse split;
 * Liu & Jordan (1963) isotropic transposition with albedo 0.2; sun position from the NOAA solar
 * equations; trackers by Marion & Dobos (2013) with backtracking.
 */
import { clearSkyPoa, singleAxisTracker, type Mounting } from "./clearsky";
import { checkHeadings } from "./glare";
import { zoneOffsetMs } from "./import/timestamps";

export const CLEAR_SKY_MODEL = {
  name: "Haurwitz (1945) clear-sky GHI, Erbs (1982) diffuse split, Liu & Jordan (1963) isotropic transposition",
  formula: "GHI = 1098 · cos Z · exp(−0.059 / cos Z) W/m²",
  coefficients: { a: 1098, b: 0.059, albedo: 0.2 },
  sources: [
    "B. Haurwitz, 'Insolation in relation to cloudiness and cloud density', Journal of Meteorology 2 (1945) (from memory, as cited by SAND2012-2389)",
    "M. Reno, C. Hansen, J. Stein, 'Global horizontal irradiance clear sky models: implementation and analysis', SAND2012-2389",
    "D. G. Erbs, S. A. Klein, J. A. Duffie, 'Estimation of the diffuse radiation fraction for hourly, daily and monthly-average global radiation', Solar Energy 28 (1982)",
    "B. Liu, R. Jordan, 'The long-term average performance of flat-plate solar-energy collectors', Solar Energy 7 (1963)",
  ],
} as const;

export interface TimelineRow {
  /** UTC instant of the row start */
  at: Date;
  /** local "HH:MM" */
  local: string;
  elevation: number;
  azimuth: number;
  poa: number;
  irOk: boolean;
  morning: boolean;
  /** Headings (degrees from north, camera facing) where the glare angle is below the limit. */
  glareHeadings: number[];
  /** Best heading: the smallest view angle off the module normal among glare-free headings. */
  bestHeading: number | null;
}

export interface TimelineDay {
  /** local YYYY-MM-DD */
  day: string;
  rows: TimelineRow[];
  /** contiguous spans where the IR minimum is met */
  windows: { start: string; end: string; peakPoa: number; morning: boolean }[];
  solarNoonLocal: string | null;
}

export interface TimelineOpts {
  days?: number;
  stepMinutes?: number;
  minPoa?: number;
  minElevationDeg?: number;
  /** Camera pitch below the horizon (90 = straight down). */
  pitchBelowHorizonDeg?: number;
  minGlareAngleDeg?: number;
  headingStepDeg?: number;
}

function localParts(ms: number, zone: string): { day: string; hm: string } {
  const d = new Date(ms + zoneOffsetMs(zone, ms));
  return { day: d.toISOString().slice(0, 10), hm: d.toISOString().slice(11, 16) };
}

/** UTC instant of local midnight starting `day` in `zone`. */
export function localMidnightUtc(day: string, zone: string): number {
  const guess = Date.parse(`${day}T00:00:00Z`);
  let t = guess - zoneOffsetMs(zone, guess);
  t = guess - zoneOffsetMs(zone, t);
  return t;
}

export function addDaysIso(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}

/** Module plane at an instant: fixed, or the tracker's current rotation. */
function modulePlane(sun: { apparentZenith: number; azimuth: number }, m: Mounting): { tilt: number; azimuth: number } {
  if (m.kind === "fixed") return { tilt: m.tilt, azimuth: m.azimuth };
  const t = singleAxisTracker(sun, m.axisAzimuth, m.maxAngle, m.gcr, m.backtrack ?? true);
  return { tilt: t.surfaceTilt, azimuth: t.surfaceAzimuth };
}

export function flightTimeline(
  firstDay: string,
  site: { lat: number; lon: number; elevationM?: number; timezone: string; mounting: Mounting },
  o: TimelineOpts = {},
): TimelineDay[] {
  const days = o.days ?? 7;
  const step = (o.stepMinutes ?? 15) * 60_000;
  const minPoa = o.minPoa ?? 600;
  const minEl = o.minElevationDeg ?? 15;
  const pitch = o.pitchBelowHorizonDeg ?? 70;
  const out: TimelineDay[] = [];
  for (let i = 0; i < days; i++) {
    const day = addDaysIso(firstDay, i);
    const from = localMidnightUtc(day, site.timezone);
    const to = localMidnightUtc(addDaysIso(day, 1), site.timezone);
    const rows: TimelineRow[] = [];
    let noonEl = -90;
    let noonAt: number | null = null;
    for (let t = from; t < to; t += step) {
      // Evaluate at the middle of the 15 minutes: the row stands for the whole step.
      const mid = new Date(t + step / 2);
      const cs = clearSkyPoa(mid, { lat: site.lat, lon: site.lon, elevationM: site.elevationM, mounting: site.mounting });
      const el = cs.sun.apparentElevation;
      if (el > noonEl) {
        noonEl = el;
        noonAt = t;
      }
      const irOk = cs.poa >= minPoa && el >= minEl;
      let glareHeadings: number[] = [];
      let bestHeading: number | null = null;
      if (el > 0) {
        const plane = modulePlane(cs.sun, site.mounting);
        const checks = checkHeadings({
          sun: cs.sun,
          moduleTiltDeg: plane.tilt,
          moduleAzimuthDeg: plane.azimuth,
          pitchBelowHorizonDeg: pitch,
          stepDeg: o.headingStepDeg ?? 15,
          minGlareAngleDeg: o.minGlareAngleDeg ?? 15,
        });
        glareHeadings = checks.filter((c) => c.glareAngle < (o.minGlareAngleDeg ?? 15)).map((c) => c.heading);
        const usable = checks.filter((c) => c.glareAngle >= (o.minGlareAngleDeg ?? 15)).sort((a, b) => a.viewOffNormal - b.viewOffNormal);
        bestHeading = usable[0]?.heading ?? null;
      }
      rows.push({ at: new Date(t), local: localParts(t, site.timezone).hm, elevation: el, azimuth: cs.sun.azimuth, poa: cs.poa, irOk, morning: false, glareHeadings, bestHeading });
    }
    for (const r of rows) r.morning = noonAt != null && r.at.getTime() < noonAt && r.elevation > 0;
    const windows: TimelineDay["windows"] = [];
    let cur: (TimelineDay["windows"][number] & { endMs: number }) | null = null;
    for (const r of rows) {
      if (r.irOk) {
        if (!cur || cur.morning !== r.morning) {
          if (cur) windows.push(cur);
          cur = { start: r.local, end: r.local, endMs: 0, peakPoa: r.poa, morning: r.morning };
        }
        cur.endMs = r.at.getTime() + step;
        cur.end = localParts(cur.endMs, site.timezone).hm;
        cur.peakPoa = Math.max(cur.peakPoa, r.poa);
      } else if (cur) {
        windows.push(cur);
        cur = null;
      }
    }
    if (cur) windows.push(cur);
    out.push({
      day,
      rows,
      windows: windows.map(({ start, end, peakPoa, morning }) => ({ start, end, peakPoa, morning })),
      solarNoonLocal: noonAt != null ? localParts(noonAt, site.timezone).hm : null,
    });
  }
  return out;
}

const COMPASS = ["N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE", "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW"];
export function compass(deg: number): string {
  return COMPASS[Math.round((((deg % 360) + 360) % 360) / 22.5) % 16]!;
}

/** Contiguous heading ranges, e.g. [0,15,30,330,345] → "330°–30°". */
export function headingRanges(headings: readonly number[], step = 15): string[] {
  if (!headings.length) return [];
  const set = new Set(headings);
  if (set.size * step >= 360) return ["all headings"];
  const sorted = [...set].sort((a, b) => a - b);
  // Start a range where the previous heading is not in the set (wrapping round north).
  const starts = sorted.filter((h) => !set.has((h - step + 360) % 360));
  return starts.map((s) => {
    let e = s;
    while (set.has((e + step) % 360) && (e + step) % 360 !== s) e = (e + step) % 360;
    return s === e ? `${s}° (${compass(s)})` : `${s}°–${e}° (${compass(s)}–${compass(e)})`;
  });
}
