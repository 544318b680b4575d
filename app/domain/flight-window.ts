/**
 * IR flight windows: the spans of a day when the modelled clear-sky POA on the site's
 * modules reaches the IR minimum (default 600 W/m², IEC TS 62446-3 as summarised) and the
 * sun is high enough. A planning aid: conditions on the day (clouds, wind) still decide.
 */
import { clearSkyPoa, type Mounting } from "./clearsky";

export interface FlightWindow {
  start: Date;
  end: Date;
  peakPoa: number;
  /** instant of the peak clear-sky POA */
  peakAt: Date;
}

export interface FlightWindowOpts {
  minPoa?: number;
  minElevationDeg?: number;
  stepMinutes?: number;
}

/**
 * Scan [fromUtc, toUtc) at `stepMinutes` (default 5) and return contiguous windows where
 * the clear-sky POA ≥ minPoa and the sun elevation ≥ minElevationDeg (default 15°).
 * A window's end is the last qualifying step plus one step.
 */
export function flightWindows(
  fromUtc: Date,
  toUtc: Date,
  site: { lat: number; lon: number; elevationM?: number; mounting: Mounting },
  opts: FlightWindowOpts = {},
): FlightWindow[] {
  const minPoa = opts.minPoa ?? 600;
  const minEl = opts.minElevationDeg ?? 15;
  const step = (opts.stepMinutes ?? 5) * 60_000;
  const out: FlightWindow[] = [];
  let cur: FlightWindow | null = null;
  for (let t = fromUtc.getTime(); t < toUtc.getTime(); t += step) {
    const cs = clearSkyPoa(new Date(t), site);
    const ok = cs.poa >= minPoa && cs.sun.apparentElevation >= minEl;
    if (ok) {
      if (!cur) cur = { start: new Date(t), end: new Date(t + step), peakPoa: cs.poa, peakAt: new Date(t) };
      cur.end = new Date(t + step);
      if (cs.poa > cur.peakPoa) {
        cur.peakPoa = cs.poa;
        cur.peakAt = new Date(t);
      }
    } else if (cur) {
      out.push(cur);
      cur = null;
    }
  }
  if (cur) out.push(cur);
  return out;
}
