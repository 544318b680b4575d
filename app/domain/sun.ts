/**
 * Sun position. Default: the NOAA solar calculator equations (Meeus, "Astronomical
 * Algorithms", low-precision series as used in NOAA's spreadsheet), ~0.01° from NREL SPA over
 * 1950–2050 — far below anything a plant's data can resolve — and ~20× faster than SPA.
 * `algorithm: "spa"` runs the full NREL SPA (./spa.ts, ±0.0003°).
 *
 * Conventions: all angles in degrees; azimuth clockwise from north (90 = east, 180 = south);
 * longitude east positive; `Date` is an instant (UTC internally).
 */
import { spa } from "./spa";

export interface SunPosition {
  /** geometric (true) zenith, no refraction */
  zenith: number;
  elevation: number;
  /** clockwise from north */
  azimuth: number;
  /** zenith including atmospheric refraction */
  apparentZenith: number;
  apparentElevation: number;
  declination: number;
  /** equation of time, minutes (apparent − mean solar time) */
  equationOfTimeMin: number;
}

export interface AtmosphereOpts {
  /** "noaa" (default, fast) or "spa" (NREL SPA, reference accuracy) */
  algorithm?: "noaa" | "spa";
  /** TT − UT, seconds; SPA only (default 69) */
  deltaTSec?: number;
  pressureMbar?: number;
  temperatureC?: number;
  /** site elevation, used only to estimate pressure when pressureMbar is not given */
  elevationM?: number;
}

const RAD = Math.PI / 180;
const sind = (d: number) => Math.sin(d * RAD);
const cosd = (d: number) => Math.cos(d * RAD);
const tand = (d: number) => Math.tan(d * RAD);
const mod = (x: number, m: number) => ((x % m) + m) % m;

/** Julian day of an instant (UT). */
export function julianDay(date: Date): number {
  return date.getTime() / 86_400_000 + 2_440_587.5;
}

interface SolarCoords {
  declination: number;
  equationOfTimeMin: number;
}

/** Declination and equation of time at an instant (NOAA spreadsheet series). */
export function solarCoordinates(date: Date): SolarCoords {
  const jc = (julianDay(date) - 2_451_545) / 36_525;
  const l0 = mod(280.46646 + jc * (36000.76983 + jc * 0.0003032), 360);
  const m = 357.52911 + jc * (35999.05029 - 0.0001537 * jc);
  const e = 0.016708634 - jc * (0.000042037 + 0.0000001267 * jc);
  const c =
    sind(m) * (1.914602 - jc * (0.004817 + 0.000014 * jc)) +
    sind(2 * m) * (0.019993 - 0.000101 * jc) +
    sind(3 * m) * 0.000289;
  const trueLong = l0 + c;
  const omega = 125.04 - 1934.136 * jc;
  const appLong = trueLong - 0.00569 - 0.00478 * sind(omega);
  const meanObliq = 23 + (26 + (21.448 - jc * (46.815 + jc * (0.00059 - jc * 0.001813))) / 60) / 60;
  const obliq = meanObliq + 0.00256 * cosd(omega);
  const declination = Math.asin(sind(obliq) * sind(appLong)) / RAD;
  const y = tand(obliq / 2) ** 2;
  const eot =
    y * Math.sin(2 * l0 * RAD) -
    2 * e * sind(m) +
    4 * e * y * sind(m) * Math.cos(2 * l0 * RAD) -
    0.5 * y * y * Math.sin(4 * l0 * RAD) -
    1.25 * e * e * Math.sin(2 * m * RAD);
  return { declination, equationOfTimeMin: (4 * eot) / RAD };
}

/** Standard-atmosphere pressure (mbar) at an elevation (m). */
export function pressureFromElevation(elevationM: number): number {
  return 1013.25 * (1 - 2.25577e-5 * elevationM) ** 5.25588;
}

/**
 * Refraction (degrees) to add to a geometric elevation, Sæmundsson/Bennett form as used by
 * NREL SPA (Reda & Andreas 2003 eq. 42), scaled for pressure and temperature. Zero once the
 * sun is well below the horizon.
 */
export function refractionDeg(elevationDeg: number, pressureMbar = 1010, temperatureC = 10): number {
  if (elevationDeg < -(0.26667 + 0.5667)) return 0;
  return (
    (pressureMbar / 1010) *
    (283 / (273 + temperatureC)) *
    (1.02 / (60 * tand(elevationDeg + 10.3 / (elevationDeg + 5.11))))
  );
}

export function sunPosition(date: Date, latDeg: number, lonDeg: number, opts: AtmosphereOpts = {}): SunPosition {
  const pressure = opts.pressureMbar ?? (opts.elevationM !== undefined ? pressureFromElevation(opts.elevationM) : 1010);
  if (opts.algorithm === "spa") {
    const r = spa(date, latDeg, lonDeg, {
      elevationM: opts.elevationM,
      pressureMbar: pressure,
      temperatureC: opts.temperatureC ?? 10,
      deltaTSec: opts.deltaTSec,
    });
    const { julianDay: _jd, ...pos } = r;
    return pos;
  }
  const { declination, equationOfTimeMin } = solarCoordinates(date);
  const minutesUtc = mod(date.getTime() / 60_000, 1440);
  const trueSolarMin = mod(minutesUtc + equationOfTimeMin + 4 * lonDeg, 1440);
  const hourAngle = trueSolarMin / 4 < 0 ? trueSolarMin / 4 + 180 : trueSolarMin / 4 - 180;

  const cosZ = sind(latDeg) * sind(declination) + cosd(latDeg) * cosd(declination) * cosd(hourAngle);
  const zenith = Math.acos(Math.min(1, Math.max(-1, cosZ))) / RAD;
  // Azimuth from components: robust at the poles and at the zenith.
  const east = -cosd(declination) * sind(hourAngle);
  const north = cosd(latDeg) * sind(declination) - sind(latDeg) * cosd(declination) * cosd(hourAngle);
  const azimuth = mod(Math.atan2(east, north) / RAD, 360);

  const elevation = 90 - zenith;
  const apparentElevation = elevation + refractionDeg(elevation, pressure, opts.temperatureC ?? 10);
  return {
    zenith,
    elevation,
    azimuth,
    apparentZenith: 90 - apparentElevation,
    apparentElevation,
    declination,
    equationOfTimeMin,
  };
}

/**
 * Angle of incidence (degrees) between the sun and a surface normal.
 * Surface azimuth clockwise from north (180 = facing south). Values > 90 mean the sun is behind.
 */
export function incidenceAngle(
  sun: { apparentZenith: number; azimuth: number },
  surfaceTiltDeg: number,
  surfaceAzimuthDeg: number,
): number {
  const c =
    cosd(sun.apparentZenith) * cosd(surfaceTiltDeg) +
    sind(sun.apparentZenith) * sind(surfaceTiltDeg) * cosd(sun.azimuth - surfaceAzimuthDeg);
  return Math.acos(Math.min(1, Math.max(-1, c))) / RAD;
}

function utcMidnight(d: Date): number {
  return Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate());
}

/** Solar noon (sun on the local meridian) of the UTC calendar day of `dateUtcMidnight`. */
export function solarNoonUtc(dateUtcMidnight: Date, lonDeg: number): Date {
  const day = utcMidnight(dateUtcMidnight);
  let noonMin = 720 - 4 * lonDeg;
  for (let i = 0; i < 3; i++) {
    const { equationOfTimeMin } = solarCoordinates(new Date(day + noonMin * 60_000));
    noonMin = 720 - 4 * lonDeg - equationOfTimeMin;
  }
  return new Date(day + noonMin * 60_000);
}

export interface SunriseSunset {
  sunrise: Date;
  sunset: Date;
  solarNoon: Date;
}

/**
 * Sunrise and sunset (upper limb on the horizon with standard refraction: geometric
 * elevation −0.833°) for the UTC calendar day of `dateUtcMidnight`. Returns null in polar
 * day or night. Note: at longitudes far from Greenwich the UTC day and the local day differ;
 * pass the UTC date whose solar noon you mean.
 */
export function sunriseSunsetUtc(dateUtcMidnight: Date, latDeg: number, lonDeg: number): SunriseSunset | null {
  const noon = solarNoonUtc(dateUtcMidnight, lonDeg);
  const at = (sign: -1 | 1): Date | null => {
    let t = noon.getTime();
    for (let i = 0; i < 3; i++) {
      const { declination, equationOfTimeMin } = solarCoordinates(new Date(t));
      const cosH = (cosd(90.833) - sind(latDeg) * sind(declination)) / (cosd(latDeg) * cosd(declination));
      if (cosH < -1 || cosH > 1) return null;
      const h = Math.acos(cosH) / RAD;
      const noonMin = 720 - 4 * lonDeg - equationOfTimeMin;
      t = utcMidnight(dateUtcMidnight) + (noonMin + sign * 4 * h) * 60_000;
    }
    return new Date(t);
  };
  const sunrise = at(-1);
  const sunset = at(1);
  if (!sunrise || !sunset) return null;
  return { sunrise, sunset, solarNoon: noon };
}

/** Day of the year (1–366) of an instant in UTC. */
export function dayOfYearUtc(date: Date): number {
  return Math.floor((date.getTime() - Date.UTC(date.getUTCFullYear(), 0, 1)) / 86_400_000) + 1;
}
