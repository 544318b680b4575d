import { describe, expect, it } from "vitest";
import {
  clearSkyPoa,
  erbsDecomposition,
  extraterrestrialDni,
  haurwitzGhi,
  poaIsotropic,
  singleAxisTracker,
} from "~/domain/clearsky";

const cosd = (d: number) => Math.cos((d * Math.PI) / 180);

describe("extraterrestrialDni (Spencer 1971)", () => {
  it("1 January: 1366.1 × (1.000110 + 0.034221 + 0.000719) = 1413.98 W/m²", () => {
    // Spencer, Search 2(5) 1971, series for (r0/r)², solar constant 1366.1 as in pvlib [X]
    expect(extraterrestrialDni(1)).toBeCloseTo(1413.98, 1);
  });
  it("varies by about ±3.3 % over the year, lowest near aphelion (early July)", () => {
    // Earth orbit eccentricity 0.0167 → (1 ± e)² ≈ ±3.4 % [C, any astronomy text]
    const jul = extraterrestrialDni(186);
    expect(jul / 1366.1).toBeGreaterThan(0.965);
    expect(jul / 1366.1).toBeLessThan(0.97);
    expect(extraterrestrialDni(3)).toBeGreaterThan(jul);
  });
});

describe("haurwitzGhi", () => {
  it("worked values of 1098·cosZ·exp(−0.059/cosZ)", () => {
    // Haurwitz 1945 form with the coefficient of Reno, Hansen & Stein SAND2012-2389 as in pvlib [S];
    // by hand: Z 0 → 1098·e^−0.059 = 1035.092; Z 60 → 549·e^−0.118 = 487.894 [X]
    expect(haurwitzGhi(0)).toBeCloseTo(1035.092, 2);
    expect(haurwitzGhi(60)).toBeCloseTo(487.894, 2);
    // original 0.057 coefficient: 1098·e^−0.057 = 1037.164 [X]
    expect(haurwitzGhi(0, 0.057)).toBeCloseTo(1037.164, 2);
  });
  it("zero with the sun at or below the horizon", () => {
    expect(haurwitzGhi(90)).toBe(0);
    expect(haurwitzGhi(120)).toBe(0);
  });
});

describe("erbsDecomposition (Erbs, Klein & Duffie 1982)", () => {
  it("GHI 800, Z 30, day 172 (middle branch)", () => {
    // By hand [X]: E0n(172) = 1321.624; kt = 800/(1321.624·cos30) = 0.698959;
    // kd = 0.9511 − 0.1604kt + 4.388kt² − 16.638kt³ + 12.336kt⁴ = 0.245600;
    // DHI = 196.480; DNI = (800 − 196.480)/cos30 = 696.885
    const r = erbsDecomposition(800, 30, 172);
    expect(r.kt).toBeCloseTo(0.698959, 5);
    expect(r.dhi).toBeCloseTo(196.48, 2);
    expect(r.dni).toBeCloseTo(696.885, 2);
  });
  it("overcast branch kt ≤ 0.22: GHI 100, Z 60, day 172", () => {
    // By hand [X]: kt = 100/(1321.624·0.5) = 0.151329; kd = 1 − 0.09kt = 0.986380;
    // DHI = 98.638; DNI = (100 − 98.638)/0.5 = 2.724
    const r = erbsDecomposition(100, 60, 172);
    expect(r.kt).toBeCloseTo(0.151329, 5);
    expect(r.dhi).toBeCloseTo(98.638, 2);
    expect(r.dni).toBeCloseTo(2.724, 2);
  });
  it("clear branch kt > 0.8 gives kd 0.165; low sun gives no beam", () => {
    // Erbs et al. 1982: kd = 0.165 for kt > 0.8 [C]
    const r = erbsDecomposition(1000, 20, 172);
    expect(r.kt).toBeGreaterThan(0.8);
    expect(r.dhi / 1000).toBeCloseTo(0.165, 6);
    // guard beyond Z 87° as in pvlib irradiance.erbs [S]
    const low = erbsDecomposition(30, 88, 172);
    expect(low.dni).toBe(0);
    expect(low.dhi).toBeCloseTo(30, 10);
  });
  it("closure: DNI·cosZ + DHI = GHI", () => {
    const r = erbsDecomposition(650, 41, 80);
    expect(r.dni * cosd(41) + r.dhi).toBeCloseTo(650, 8);
  });
});

describe("poaIsotropic (Liu & Jordan 1963)", () => {
  it("horizontal plane returns GHI", () => {
    const r = poaIsotropic({ dni: 700, dhi: 150, ghi: 700 * cosd(35) + 150, aoiDeg: 35, surfaceTiltDeg: 0 });
    expect(r.poa).toBeCloseTo(700 * cosd(35) + 150, 8);
    expect(r.groundDiffuse).toBeCloseTo(0, 10);
  });
  it("worked value on a 30° tilt", () => {
    // by hand [X]: beam 800·cos20 = 751.754; sky 100·(1+cos30)/2 = 93.301;
    // ground 600·0.2·(1−cos30)/2 = 8.038; total 853.093
    const r = poaIsotropic({ dni: 800, dhi: 100, ghi: 600, aoiDeg: 20, surfaceTiltDeg: 30 });
    expect(r.beam).toBeCloseTo(751.754, 2);
    expect(r.skyDiffuse).toBeCloseTo(93.301, 2);
    expect(r.groundDiffuse).toBeCloseTo(8.038, 2);
    expect(r.poa).toBeCloseTo(853.093, 2);
  });
  it("no beam from behind the plane", () => {
    expect(poaIsotropic({ dni: 800, dhi: 100, ghi: 600, aoiDeg: 100, surfaceTiltDeg: 30 }).beam).toBe(0);
  });
});

describe("singleAxisTracker (first principles, Marion & Dobos 2013 geometry)", () => {
  it("sun in the vertical plane through a N–S axis → theta 0", () => {
    // sun due south at any height lies in the axis plane: the flat table faces it best [P]
    for (const z of [10, 40, 70]) {
      const t = singleAxisTracker({ apparentZenith: z, azimuth: 180 }, 180, 60, 0.4, false);
      expect(t.trackerTheta).toBeCloseTo(0, 10);
      expect(t.aoi).toBeCloseTo(z, 8);
    }
  });
  it("sun due east at elevation 30°: ideal rotation 60° toward east, aoi 0", () => {
    const t = singleAxisTracker({ apparentZenith: 60, azimuth: 90 }, 180, 90, 0.4, false);
    expect(Math.abs(t.trackerTheta)).toBeCloseTo(60, 8);
    expect(t.surfaceTilt).toBeCloseTo(60, 8);
    expect(t.surfaceAzimuth).toBeCloseTo(90, 8);
    expect(t.aoi).toBeCloseTo(0, 6);
  });
  it("rotation limit clips theta and raises the aoi by the clipped amount", () => {
    const t = singleAxisTracker({ apparentZenith: 60, azimuth: 90 }, 180, 45, 0.4, false);
    expect(t.surfaceTilt).toBeCloseTo(45, 8);
    expect(t.aoi).toBeCloseTo(15, 6);
  });
  it("morning and afternoon rotate to opposite sides", () => {
    const am = singleAxisTracker({ apparentZenith: 50, azimuth: 100 }, 180, 60, 0.4);
    const pm = singleAxisTracker({ apparentZenith: 50, azimuth: 260 }, 180, 60, 0.4);
    expect(Math.sign(am.trackerTheta)).toBe(-Math.sign(pm.trackerTheta));
    expect(am.surfaceAzimuth).toBeCloseTo(90, 8);
    expect(pm.surfaceAzimuth).toBeCloseTo(270, 8);
  });
  it("backtracking: rows just touch the shadow line, cos(θsun − β) = cos θsun / gcr", () => {
    // Anderson & Mikofski 2020 (NREL/TP-5K00-76626) eq. for flat terrain, checked by row geometry [X]:
    // projected sun angle 80°, gcr 0.4 → β = 80 − acos(cos80/0.4) = 15.73°
    const z = 80;
    const t = singleAxisTracker({ apparentZenith: z, azimuth: 90 }, 180, 60, 0.4, true);
    const beta = Math.abs(t.trackerTheta);
    expect(cosd(z - beta)).toBeCloseTo(cosd(z) / 0.4, 8);
    expect(beta).toBeCloseTo(15.73, 2);
    // high sun: cos θ ≥ gcr, no shading, no correction
    const hi = singleAxisTracker({ apparentZenith: 40, azimuth: 90 }, 180, 60, 0.4, true);
    expect(Math.abs(hi.trackerTheta)).toBeCloseTo(40, 8);
  });
  it("sun below the horizon: stowed flat", () => {
    expect(singleAxisTracker({ apparentZenith: 100, azimuth: 60 }, 180, 60, 0.4).trackerTheta).toBe(0);
  });
});

describe("clearSkyPoa", () => {
  const tucson = { lat: 32.22969, lon: -110.95534 };
  const noon = new Date(Date.UTC(2018, 9, 18, 19, 30)); // ≈ solar noon in Tucson
  it("south-facing 30° plane beats horizontal in October at noon; tracker near the plane too", () => {
    const fixed = clearSkyPoa(noon, { ...tucson, mounting: { kind: "fixed", tilt: 30, azimuth: 180 } });
    const flat = clearSkyPoa(noon, { ...tucson, mounting: { kind: "fixed", tilt: 0, azimuth: 180 } });
    expect(flat.poa).toBeCloseTo(flat.ghi, 6);
    expect(fixed.poa).toBeGreaterThan(flat.poa * 1.1);
    expect(fixed.ghi).toBeGreaterThan(700);
    expect(fixed.ghi).toBeLessThan(900);
  });
  it("tracker collects more than a flat plane in the morning", () => {
    const am = new Date(Date.UTC(2018, 9, 18, 15, 30));
    const trk = clearSkyPoa(am, { ...tucson, mounting: { kind: "tracker", axisAzimuth: 180, maxAngle: 60, gcr: 0.35 } });
    const flat = clearSkyPoa(am, { ...tucson, mounting: { kind: "fixed", tilt: 0, azimuth: 180 } });
    expect(trk.poa).toBeGreaterThan(flat.poa * 1.3);
  });
  it("zero at night", () => {
    const night = new Date(Date.UTC(2018, 9, 18, 8));
    expect(clearSkyPoa(night, { ...tucson, mounting: { kind: "fixed", tilt: 30, azimuth: 180 } }).poa).toBe(0);
  });
});
