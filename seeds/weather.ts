/**
 * Weather for the demo plant: sun position, clear-sky GHI (Haurwitz) scaled by a clear-sky
 * index that depends on the day's sky type, Erbs decomposition, isotropic transposition to the
 * fixed plane, ambient temperature and wind with daily cycles, module and cell temperature from
 * the Sandia model. Each 5-minute interval averages five 1-minute sub-steps, so the label (the
 * interval start) and the physics agree (DOMAIN.md §11, interval labels).
 */
import { erbsDecomposition, haurwitzGhi, poaIsotropic } from "../app/domain/clearsky";
import { incidenceAngle, sunPosition } from "../app/domain/sun";
import { sandiaCellTemp, sandiaModuleTemp } from "../app/domain/temperature";
import type { SiteSpec } from "./plant";
import type { Rng } from "./prng";
import { dayOfYear } from "./time";

export type SkyType = "clear" | "hazy" | "broken" | "overcast";

export interface DayWeather {
  date: string;
  sky: SkyType;
  /** clear-sky scaling for aerosols/water vapour on a clear day (0.95–1.0) */
  turbidity: number;
  tMin: number;
  tMax: number;
  windMean: number;
}

export interface IntervalWeather {
  /** sun at mid-interval */
  elevation: number;
  azimuth: number;
  ghi: number;
  poa: number;
  /** share of POA that is beam (0 at night) */
  beamShare: number;
  ambient: number;
  wind: number;
  tModule: number;
  tCell: number;
  daylight: boolean;
}

/** Day-level plan: sky types (forced days win), temperatures and wind with day-to-day persistence. */
export function planDays(dates: string[], rng: Rng, forced: Map<string, SkyType>, site: SiteSpec): DayWeather[] {
  let anomaly = 0;
  let windLog = 0;
  return dates.map((date) => {
    const doy = dayOfYear(date);
    const u = rng.next();
    const natural: SkyType = u < 0.76 ? "clear" : u < 0.87 ? "hazy" : u < 0.97 ? "broken" : "overcast";
    const sky = forced.get(date) ?? natural;
    anomaly = 0.7 * anomaly + rng.normal(0, 1.5);
    windLog = 0.6 * windLog + rng.normal(0, 0.3);
    // Seasonal cycle of a hot-summer Mediterranean inland site [P]: July max ~36 °C, min ~19 °C.
    const season = Math.cos((2 * Math.PI * (doy - 205)) / 365) * (site.lat >= 0 ? 1 : -1);
    const cloudCool = sky === "overcast" ? -5 : sky === "broken" ? -2.5 : 0;
    const tMax = 26 + 10 * season + anomaly + cloudCool;
    const tMin = 12.5 + 7 * season + anomaly * 0.7 + (sky === "overcast" ? 2 : 0);
    // a forced clear day (flight day, fixture day) is also a calm one
    const windMean = forced.get(date) === "clear" ? 1.8 : Math.min(8, 2.3 * Math.exp(windLog) * (sky === "clear" ? 1 : 1.4));
    return { date, sky, turbidity: rng.uniform(0.95, 1.0), tMin, tMax, windMean };
  });
}

/** 1-minute clear-sky index process for one day of a given sky type (index 0 = local midnight). */
export function skyIndexSeries(day: DayWeather, rng: Rng, minutes = 1500): Float64Array {
  const kc = new Float64Array(minutes);
  switch (day.sky) {
    case "clear":
      for (let m = 0; m < minutes; m++) kc[m] = day.turbidity;
      break;
    case "hazy": {
      const base = rng.uniform(0.8, 0.92);
      const ph = rng.uniform(0, 2 * Math.PI);
      for (let m = 0; m < minutes; m++) kc[m] = base + 0.05 * Math.sin(ph + (2 * Math.PI * m) / 170) + rng.normal(0, 0.005);
      break;
    }
    case "broken": {
      // two-state Markov sky: cumulus passages of ~6–20 min, gaps of ~10–40 min, edge enhancement
      let cloudy = rng.next() < 0.4;
      let depth = rng.uniform(0.25, 0.6);
      let sinceEdge = 99;
      const meanCloud = rng.uniform(6, 20);
      const meanGap = rng.uniform(10, 40);
      for (let m = 0; m < minutes; m++) {
        if (cloudy && rng.next() < 1 / meanCloud) {
          cloudy = false;
          sinceEdge = 0;
        } else if (!cloudy && rng.next() < 1 / meanGap) {
          cloudy = true;
          depth = rng.uniform(0.25, 0.6);
        }
        sinceEdge++;
        kc[m] = cloudy ? depth + rng.normal(0, 0.03) : day.turbidity * (sinceEdge <= 2 ? 1.08 : 1);
      }
      break;
    }
    case "overcast": {
      let level = rng.uniform(0.18, 0.4);
      for (let m = 0; m < minutes; m++) {
        level = Math.min(0.55, Math.max(0.1, level + rng.normal(0, 0.01)));
        kc[m] = level;
      }
      break;
    }
  }
  return kc;
}

export interface SubstepIrradiance {
  ghi: number;
  poa: number;
  beam: number;
}

/** Irradiance at one instant for a given GHI (or the clear-sky GHI times kc). */
export function irradianceAt(utcMs: number, site: SiteSpec, ghiOrKc: { ghi?: number; kc?: number }): SubstepIrradiance {
  const date = new Date(utcMs);
  const sun = sunPosition(date, site.lat, site.lon, { elevationM: site.elevationM });
  if (sun.apparentElevation <= 0) return { ghi: 0, poa: 0, beam: 0 };
  const ghi = ghiOrKc.ghi !== undefined ? Math.max(0, ghiOrKc.ghi) : haurwitzGhi(sun.apparentZenith) * (ghiOrKc.kc ?? 1);
  const doy = Math.floor((utcMs - Date.UTC(date.getUTCFullYear(), 0, 1)) / 86_400_000) + 1;
  const { dni, dhi } = erbsDecomposition(ghi, sun.apparentZenith, doy);
  const aoi = incidenceAngle(sun, site.mounting.tilt, site.mounting.azimuth);
  const p = poaIsotropic({ dni, dhi, ghi, aoiDeg: aoi, surfaceTiltDeg: site.mounting.tilt, albedo: site.albedo });
  return { ghi, poa: p.poa, beam: p.beam };
}

/** Ambient temperature from the day plan: minimum near sunrise (06 solar), maximum at 15 solar. */
export function ambientAt(solarHour: number, prev: DayWeather, day: DayWeather, next: DayWeather): number {
  const h = solarHour;
  if (h < 6) {
    const f = (h + 9) / 15; // decay from yesterday's 15:00 maximum to today's 06:00 minimum
    return prev.tMax - (prev.tMax - day.tMin) * (1 - Math.cos(Math.PI * f)) / 2;
  }
  if (h < 15) return day.tMin + (day.tMax - day.tMin) * (1 - Math.cos((Math.PI * (h - 6)) / 9)) / 2;
  const f = (h - 15) / 15;
  return day.tMax - (day.tMax - next.tMin) * (1 - Math.cos(Math.PI * f)) / 2;
}

/** Wind: the day's mean with an afternoon maximum and gusty noise, never negative. */
export function windAt(solarHour: number, day: DayWeather, rng: Rng): number {
  const cycle = 0.75 + 0.5 * Math.max(0, Math.sin((Math.PI * (solarHour - 9)) / 12));
  return Math.max(0, day.windMean * cycle + rng.normal(0, 0.35));
}

/**
 * Interval weather: average of five 1-minute sub-steps of irradiance; temperatures from the
 * averaged POA. `ghiAt(minuteUtcMs)` supplies measured GHI when a real series drives the plant;
 * otherwise `kcAt` the clear-sky index.
 */
export function intervalWeather(
  startUtcMs: number,
  site: SiteSpec,
  source: { kcAt?: (utcMs: number) => number; ghiAt?: (utcMs: number) => number | undefined },
  temps: { ambient: number; wind: number },
): IntervalWeather {
  let ghi = 0;
  let poa = 0;
  let beam = 0;
  const mid = sunPosition(new Date(startUtcMs + 150_000), site.lat, site.lon, { elevationM: site.elevationM });
  // the sun moves < 1.3° in 2.5 minutes: well below the horizon at mid-interval means night throughout
  const night = mid.apparentElevation < -2;
  for (let k = 0; k < 5 && !night; k++) {
    const t = startUtcMs + (k + 0.5) * 60_000;
    const measured = source.ghiAt?.(t);
    const s = irradianceAt(t, site, measured !== undefined ? { ghi: measured } : { kc: source.kcAt?.(t) ?? 1 });
    ghi += s.ghi / 5;
    poa += s.poa / 5;
    beam += s.beam / 5;
  }
  const { ambient, wind } = temps;
  const tModule = sandiaModuleTemp(poa, ambient, wind, site.moduleType);
  const tCell = sandiaCellTemp(poa, ambient, wind, site.moduleType);
  return {
    elevation: mid.apparentElevation,
    azimuth: mid.azimuth,
    ghi,
    poa,
    beamShare: poa > 0 ? beam / poa : 0,
    ambient,
    wind,
    tModule,
    tCell,
    daylight: poa > 0,
  };
}

/** Local mean solar hour (longitude correction only) of an instant. */
export function solarHour(utcMs: number, lonDeg: number): number {
  const h = (utcMs / 3_600_000 + lonDeg / 15) % 24;
  return h < 0 ? h + 24 : h;
}

