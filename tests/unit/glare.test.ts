import { describe, expect, it } from "vitest";
import { cameraViewVector, checkHeadings, glareAngle, planeNormal, specularReflection, sunVector, viewAngleOffNormal } from "~/domain/glare";
import { incidenceAngle } from "~/domain/sun";

const close = (a: readonly number[], b: readonly number[]) => a.forEach((x, i) => expect(x).toBeCloseTo(b[i], 9));

describe("specular reflection (law of reflection, first principles) [P]", () => {
  it("sun on the module normal: the reflection goes straight back toward the sun", () => {
    const s = sunVector(30, 180);
    close(specularReflection(s, planeNormal(30, 180)), s);
  });
  it("horizontal mirror: same zenith, opposite azimuth", () => {
    close(specularReflection(sunVector(40, 120), planeNormal(0, 0)), sunVector(40, 300));
  });
});

describe("glare angle", () => {
  it("nadir camera over a flat module: 0 with the sun overhead, the sun zenith otherwise", () => {
    const nadir = cameraViewVector(0, 90);
    const flat = planeNormal(0, 180);
    expect(glareAngle(nadir, specularReflection(sunVector(0, 0), flat))).toBeCloseTo(0, 6);
    // the reflected ray leaves at the sun's zenith angle on the other side of the normal [P]
    expect(glareAngle(nadir, specularReflection(sunVector(20, 150), flat))).toBeCloseTo(20, 9);
  });
  it("looking along the normal, the glare angle equals the angle of incidence", () => {
    // reflection is symmetric about the normal [P]; module 30° south, camera heading north pitched 60° down
    const sun = { apparentZenith: 40, azimuth: 240 };
    const n = planeNormal(30, 180);
    const v = cameraViewVector(0, 60);
    expect(viewAngleOffNormal(v, n)).toBeCloseTo(0, 6);
    expect(glareAngle(v, specularReflection(sunVector(40, 240), n))).toBeCloseTo(incidenceAngle(sun, 30, 180), 9);
  });
  it("sun behind the camera on the normal: the normal view is the glare view", () => {
    const rows = checkHeadings({ sun: { apparentZenith: 30, azimuth: 180 }, moduleTiltDeg: 30, moduleAzimuthDeg: 180, pitchBelowHorizonDeg: 60 });
    const north = rows.find((r) => r.heading === 0)!;
    expect(north.glareAngle).toBeCloseTo(0, 6);
    expect(north.avoid).toBe(true);
    // with the sun to the west-south-west the same view is usable
    const pm = checkHeadings({ sun: { apparentZenith: 40, azimuth: 250 }, moduleTiltDeg: 30, moduleAzimuthDeg: 180, pitchBelowHorizonDeg: 60 });
    expect(pm.find((r) => r.heading === 0)!.avoid).toBe(false);
    expect(pm.find((r) => r.heading === 180)!.avoid).toBe(true); // 60° off normal
  });
});
