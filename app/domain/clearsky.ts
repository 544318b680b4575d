/**
 * Clear-sky irradiance and transposition to the module plane: extraterrestrial irradiance
 * (Spencer 1971), Haurwitz clear-sky GHI, Erbs decomposition, Liu–Jordan isotropic POA and a
 * horizontal single-axis tracker with backtracking. Angles in degrees, irradiance in W/m².
 */
import { dayOfYearUtc, incidenceAngle, sunPosition, type SunPosition } from "./sun";

const RAD = Math.PI / 180;
const sind = (d: number) => Math.sin(d * RAD);
const cosd = (d: number) => Math.cos(d * RAD);
const mod = (x: number, m: number) => ((x % m) + m) % m;

/** Solar constant, W/m² (the value pvlib uses by default). */
export const SOLAR_CONSTANT = 1366.1;

/** Extraterrestrial normal irradiance, Spencer (1971) Fourier series for (r0/r)². */
export function extraterrestrialDni(dayOfYear: number, solarConstant = SOLAR_CONSTANT): number {
  const b = (2 * Math.PI * (dayOfYear - 1)) / 365;
  const rr =
    1.00011 + 0.034221 * Math.cos(b) + 0.00128 * Math.sin(b) + 0.000719 * Math.cos(2 * b) + 0.000077 * Math.sin(2 * b);
  return solarConstant * rr;
}

/**
 * Haurwitz clear-sky GHI: 1098·cosZ·exp(−k/cosZ), 0 with the sun at or below the horizon.
 * k = 0.059 as given by Reno, Hansen & Stein (SAND2012-2389) and implemented in pvlib;
 * some summaries print 0.057 — the difference is < 0.5 % at Z = 60°.
 */
export function haurwitzGhi(apparentZenithDeg: number, k = 0.059): number {
  const c = cosd(apparentZenithDeg);
  if (!(c > 0)) return 0;
  return 1098 * c * Math.exp(-k / c);
}

/** Clearness index kt = GHI / (E0n·cosZ), cosZ floored at 0.065 and kt clipped to [0, 2] as in pvlib. */
export function clearnessIndex(ghi: number, zenithDeg: number, dayOfYear: number): number {
  const c = Math.max(cosd(zenithDeg), 0.065);
  const kt = ghi / (extraterrestrialDni(dayOfYear) * c);
  return Math.min(2, Math.max(0, kt));
}

/** Erbs, Klein & Duffie (1982) diffuse fraction as a function of kt. */
export function erbsDiffuseFraction(kt: number): number {
  if (kt <= 0.22) return 1 - 0.09 * kt;
  if (kt <= 0.8) return 0.9511 - 0.1604 * kt + 4.388 * kt ** 2 - 16.638 * kt ** 3 + 12.336 * kt ** 4;
  return 0.165;
}

/**
 * Split GHI into DNI and DHI (Erbs, Klein & Duffie 1982). Beyond zenith 87° or for negative
 * GHI the beam is set to 0 and everything is diffuse (pvlib's guard).
 */
export function erbsDecomposition(ghi: number, zenithDeg: number, dayOfYear: number): { dni: number; dhi: number; kt: number } {
  const kt = clearnessIndex(ghi, zenithDeg, dayOfYear);
  const dhiRaw = erbsDiffuseFraction(kt) * ghi;
  let dni = (ghi - dhiRaw) / cosd(zenithDeg);
  if (zenithDeg > 87 || ghi < 0 || !(dni >= 0)) dni = 0;
  const dhi = ghi - dni * cosd(zenithDeg);
  return { dni, dhi, kt };
}

/** Plane-of-array irradiance, isotropic sky (Liu & Jordan 1963) plus ground reflection. */
export function poaIsotropic(p: {
  dni: number;
  dhi: number;
  ghi: number;
  aoiDeg: number;
  surfaceTiltDeg: number;
  albedo?: number;
}): { poa: number; beam: number; skyDiffuse: number; groundDiffuse: number } {
  const beam = Math.max(0, p.dni * cosd(p.aoiDeg));
  const skyDiffuse = Math.max(0, p.dhi * (1 + cosd(p.surfaceTiltDeg)) / 2);
  const groundDiffuse = Math.max(0, p.ghi * (p.albedo ?? 0.2) * (1 - cosd(p.surfaceTiltDeg)) / 2);
  return { poa: beam + skyDiffuse + groundDiffuse, beam, skyDiffuse, groundDiffuse };
}

export interface TrackerState {
  /** rotation from horizontal; positive tilts the surface toward axisAzimuth + 90° */
  trackerTheta: number;
  surfaceTilt: number;
  surfaceAzimuth: number;
  aoi: number;
}

/**
 * Horizontal single-axis tracker (Marion & Dobos 2013, NREL/TP-6A20-58891) with optional
 * backtracking for a flat site (Anderson & Mikofski 2020, NREL/TP-5K00-76626):
 * θ_bt = θ_ideal − sign(θ_ideal)·acos(min(1, cos θ_ideal / gcr)).
 * With the sun below the horizon the tracker is stowed flat (θ = 0).
 */
export function singleAxisTracker(
  sun: { apparentZenith: number; azimuth: number },
  axisAzimuthDeg: number,
  maxAngleDeg: number,
  gcr: number,
  backtrack = true,
): TrackerState {
  // Sun vector in (east, north, up).
  const sx = sind(sun.apparentZenith) * sind(sun.azimuth);
  const sy = sind(sun.apparentZenith) * cosd(sun.azimuth);
  const sz = cosd(sun.apparentZenith);
  // Unit vector across the axis, pointing to axisAzimuth + 90°.
  const rx = cosd(axisAzimuthDeg);
  const ry = -sind(axisAzimuthDeg);
  const xp = sx * rx + sy * ry;

  let theta = 0;
  if (sz > 0) {
    theta = Math.atan2(xp, sz) / RAD;
    if (backtrack && gcr > 0) {
      const temp = Math.min(1, cosd(theta) / gcr);
      theta -= Math.sign(theta) * (Math.acos(temp) / RAD);
    }
    theta = Math.max(-maxAngleDeg, Math.min(maxAngleDeg, theta));
  }
  // Surface normal = cosθ·up + sinθ·across.
  const nx = sind(theta) * rx;
  const ny = sind(theta) * ry;
  const nz = cosd(theta);
  const surfaceTilt = Math.acos(Math.min(1, nz)) / RAD;
  const surfaceAzimuth = Math.abs(theta) < 1e-12 ? mod(axisAzimuthDeg + 90, 360) : mod(Math.atan2(nx, ny) / RAD, 360);
  const cosAoi = sx * nx + sy * ny + sz * nz;
  const aoi = Math.acos(Math.min(1, Math.max(-1, cosAoi))) / RAD;
  return { trackerTheta: theta, surfaceTilt, surfaceAzimuth, aoi };
}

export type Mounting =
  | { kind: "fixed"; tilt: number; azimuth: number }
  | { kind: "tracker"; axisAzimuth: number; maxAngle: number; gcr: number; backtrack?: boolean };

/**
 * Clear-sky POA at an instant: Haurwitz GHI → Erbs DNI/DHI → isotropic transposition on the
 * fixed plane or the tracker's current plane. A planning estimate, not a measurement.
 */
export function clearSkyPoa(
  date: Date,
  site: { lat: number; lon: number; elevationM?: number; albedo?: number; mounting: Mounting },
): { poa: number; ghi: number; dni: number; dhi: number; aoi: number; surfaceTilt: number; sun: SunPosition } {
  const sun = sunPosition(date, site.lat, site.lon, { elevationM: site.elevationM });
  const ghi = haurwitzGhi(sun.apparentZenith);
  const { dni, dhi } = erbsDecomposition(ghi, sun.apparentZenith, dayOfYearUtc(date));
  const m = site.mounting;
  let tilt: number;
  let aoi: number;
  if (m.kind === "fixed") {
    tilt = m.tilt;
    aoi = incidenceAngle(sun, m.tilt, m.azimuth);
  } else {
    const t = singleAxisTracker(sun, m.axisAzimuth, m.maxAngle, m.gcr, m.backtrack ?? true);
    tilt = t.surfaceTilt;
    aoi = t.aoi;
  }
  const { poa } = poaIsotropic({ dni, dhi, ghi, aoiDeg: aoi, surfaceTiltDeg: tilt, albedo: site.albedo });
  return { poa, ghi, dni, dhi, aoi, surfaceTilt: tilt, sun };
}

/**
 * Clear-sky values averaged over an interval at 1-minute steps (minute midpoints), rather
 * than evaluated at the interval's label instant: averaging matters near sunrise/sunset and
 * for 15–60 min data (rdtools issue #243).
 */
export function clearSkyPoaAveraged(
  intervalStart: Date,
  intervalMinutes: number,
  site: Parameters<typeof clearSkyPoa>[1],
): { poa: number; ghi: number } {
  let poa = 0;
  let ghi = 0;
  const n = Math.max(1, Math.round(intervalMinutes));
  for (let k = 0; k < n; k++) {
    const r = clearSkyPoa(new Date(intervalStart.getTime() + (k + 0.5) * (intervalMinutes / n) * 60_000), site);
    poa += r.poa;
    ghi += r.ghi;
  }
  return { poa: poa / n, ghi: ghi / n };
}
