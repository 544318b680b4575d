/**
 * Glare geometry for IR flights: the specular reflection of the sun off a module plane and
 * the angle between it and the camera's line of sight. Vectors are (east, north, up) unit
 * vectors; angles in degrees; azimuths and headings clockwise from north.
 */

export type Vec3 = readonly [number, number, number];

const RAD = Math.PI / 180;
const dot = (a: Vec3, b: Vec3) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const angleBetween = (a: Vec3, b: Vec3) => Math.acos(Math.max(-1, Math.min(1, dot(a, b)))) / RAD;

/** Unit vector from the ground toward the sun. */
export function sunVector(zenithDeg: number, azimuthDeg: number): Vec3 {
  const z = zenithDeg * RAD;
  const a = azimuthDeg * RAD;
  return [Math.sin(z) * Math.sin(a), Math.sin(z) * Math.cos(a), Math.cos(z)];
}

/** Unit normal of a module plane tilted `tiltDeg` toward `azimuthDeg`. */
export function planeNormal(tiltDeg: number, azimuthDeg: number): Vec3 {
  return sunVector(tiltDeg, azimuthDeg);
}

/**
 * Direction of the reflected sunlight leaving the module: r = 2(n·s)n − s, with s toward
 * the sun. With the sun on the normal, r = s: the reflection goes straight back at the sun.
 */
export function specularReflection(sun: Vec3, normal: Vec3): Vec3 {
  const k = 2 * dot(normal, sun);
  return [k * normal[0] - sun[0], k * normal[1] - sun[1], k * normal[2] - sun[2]];
}

/** Camera line of sight (from the camera toward the ground) for a heading and a pitch below the horizon (90 = nadir). */
export function cameraViewVector(headingDeg: number, pitchBelowHorizonDeg: number): Vec3 {
  const h = headingDeg * RAD;
  const p = pitchBelowHorizonDeg * RAD;
  return [Math.cos(p) * Math.sin(h), Math.cos(p) * Math.cos(h), -Math.sin(p)];
}

/**
 * Angle between the reflected ray and the direction from the module back to the camera:
 * 0 means the camera looks straight into the sun's reflection.
 */
export function glareAngle(cameraView: Vec3, reflection: Vec3): number {
  return angleBetween([-cameraView[0], -cameraView[1], -cameraView[2]], reflection);
}

/** Angle between the camera's line of sight (reversed) and the module normal; ≤ 30° is the usual IR advice. */
export function viewAngleOffNormal(cameraView: Vec3, normal: Vec3): number {
  return angleBetween([-cameraView[0], -cameraView[1], -cameraView[2]], normal);
}

export interface HeadingCheck {
  heading: number;
  glareAngle: number;
  viewOffNormal: number;
  avoid: boolean;
}

/**
 * Glare and view angles for headings 0…360 at `stepDeg`; `avoid` when the glare angle is
 * below `minGlareAngleDeg` (default 15°, common practice) or the view is more than
 * `maxOffNormalDeg` (default 30°) off the module normal.
 */
export function checkHeadings(p: {
  sun: { apparentZenith: number; azimuth: number };
  moduleTiltDeg: number;
  moduleAzimuthDeg: number;
  pitchBelowHorizonDeg: number;
  stepDeg?: number;
  minGlareAngleDeg?: number;
  maxOffNormalDeg?: number;
}): HeadingCheck[] {
  const n = planeNormal(p.moduleTiltDeg, p.moduleAzimuthDeg);
  const r = specularReflection(sunVector(p.sun.apparentZenith, p.sun.azimuth), n);
  const step = p.stepDeg ?? 10;
  const out: HeadingCheck[] = [];
  for (let h = 0; h < 360; h += step) {
    const v = cameraViewVector(h, p.pitchBelowHorizonDeg);
    const g = glareAngle(v, r);
    const off = viewAngleOffNormal(v, n);
    out.push({ heading: h, glareAngle: g, viewOffNormal: off, avoid: g < (p.minGlareAngleDeg ?? 15) || off > (p.maxOffNormalDeg ?? 30) });
  }
  return out;
}
