import { describe, expect, it } from "vitest";
import { ANOMALY_CLASSES, classByName, deltaTBand, describeEffect, effectInStrings, effectiveRule } from "~/domain/anomaly-classes";
import { adviceFor, crossReference, stringKwhPerDayEstimate, type XrefFinding, type XrefFlag } from "~/domain/cross-reference";
import { createNearestString, parseFindingsCsv, type LayoutString } from "~/domain/findings-csv";
import { haurwitzGhi } from "~/domain/clearsky";
import { planeNormal, specularReflection, sunVector, glareAngle, cameraViewVector } from "~/domain/glare";
import { CLEAR_SKY_MODEL, flightTimeline, headingRanges, localMidnightUtc } from "~/domain/flight-timeline";
import { cameraPlan, checkConditions } from "~/domain/flight-conditions";

describe("anomaly classes (defaults of the trade [P], names after IEC TS 62446-3 patterns)", () => {
  it("has the ten classes, each found by its name case-insensitively", () => {
    expect(ANOMALY_CLASSES.map((c) => c.name)).toEqual([
      "cell hot spot", "several hot cells", "bypass-diode substring", "module open or short", "string offline",
      "hot connector or junction box", "broken glass", "soiling", "shading", "vegetation",
    ]);
    expect(classByName("String Offline")?.key).toBe("string_offline");
    expect(classByName("  HOT connector or   junction box ")?.key).toBe("hot_connector");
    expect(classByName("bypass diode substring")?.key).toBe("bypass_diode_substring");
    expect(classByName("delamination")).toBeUndefined();
  });
  it("expected effects: string offline = 1 string, substring = ⅓ module, module = 1/28 string at 28 modules", () => {
    const at = (k: string) => effectInStrings(effectiveRule(k, undefined), 28);
    expect(at("string_offline")).toBe(1);
    expect(at("hot_connector")).toBe(1);
    expect(at("module_open_or_short")).toBeCloseTo(1 / 28, 12);
    expect(at("bypass_diode_substring")).toBeCloseTo(1 / 84, 12);
    expect(at("cell_hot_spot")).toBeLessThan(0.01);
    expect(describeEffect(effectiveRule("bypass_diode_substring", undefined))).toBe("⅓ of a module");
  });
  it("an admin override replaces the default", () => {
    const o = new Map([["cell_hot_spot", { severity: "high" as const, effectUnit: "string" as const, effectAmount: 0.5 }]]);
    expect(effectiveRule("cell_hot_spot", o)).toEqual({ severity: "high", effectUnit: "string", effectAmount: 0.5 });
    expect(effectInStrings(effectiveRule("cell_hot_spot", o), 28)).toBe(0.5);
  });
  it("ΔT bands are a hint of the trade's convention, not a classification", () => {
    expect(deltaTBand(4)).toBe("ΔT under 10 K");
    expect(deltaTBand(15)).toBe("ΔT 10–20 K");
    expect(deltaTBand(29.6)).toBe("ΔT over 20 K");
    expect(deltaTBand(null)).toBeNull();
  });
});

const flag = (p: Partial<XrefFlag>): XrefFlag => ({ id: "F", combinerId: 1, combinerName: "B1-I2-C04", state: "new", stringsOut: 1, lostKwhPerDay: 60, firstDay: "2026-10-10", lastDay: "2026-11-20", ...p });
const finding = (p: Partial<XrefFinding>): XrefFinding => ({ id: "x", combinerId: 1, combinerName: "B1-I2-C04", stringNumber: 7, classKey: "string_offline", flownOn: "2026-10-21", modulesPerString: 28, ...p });
const opts = { threshold: 0.7, windowDays: 60, stringKwhPerDay: 60 };

describe("cross-reference arithmetic: explained = Σ expected loss ÷ measured deficit", () => {
  it("one string offline on a one-string flag explains it fully", () => {
    const r = crossReference([flag({})], [finding({})], opts);
    expect(r.flags[0]!.explainedFraction).toBeCloseTo(1, 12);
    expect(r.flags[0]!.expectedKwhPerDay).toBeCloseTo(60, 12);
    expect(r.flags[0]!.nextState).toBe("explained");
    expect(r.flags[0]!.stringsToCheck).toEqual([7]);
    expect(r.flags[0]!.advice).toBe("Check connectors, fuse and cable of B1-I2-C04 string 7 first.");
  });
  it("one of two open strings found: 0.5 < 0.7 → needs flight; both found → explained", () => {
    const f = flag({ stringsOut: 2, lostKwhPerDay: 120 });
    expect(crossReference([f], [finding({ id: "a", stringNumber: 3 })], opts).flags[0]).toMatchObject({ explainedFraction: 0.5, nextState: "needs flight" });
    const both = crossReference([f], [finding({ id: "a", stringNumber: 3 }), finding({ id: "b", stringNumber: 4 })], opts).flags[0]!;
    expect(both.explainedFraction).toBe(1);
    expect(both.advice).toBe("Check connectors, fuse and cable of B1-I2-C04 strings 3 and 4 first.");
  });
  it("hot cells do not explain a one-string deficit: (0.05 + 0.15)/28 of a string", () => {
    const r = crossReference([flag({})], [finding({ id: "a", classKey: "cell_hot_spot" }), finding({ id: "b", stringNumber: 2, classKey: "several_hot_cells" })], opts).flags[0]!;
    expect(r.explainedFraction).toBeCloseTo(0.2 / 28, 12);
    expect(r.nextState).toBe("needs flight");
    expect(r.advice).toBe("Inspect the modules of B1-I2-C04 strings 2 and 7.");
  });
  it("two findings on one string count once (the larger)", () => {
    const r = crossReference([flag({ stringsOut: 2, lostKwhPerDay: 100 })], [finding({ id: "a" }), finding({ id: "b", classKey: "hot_connector" })], opts).flags[0]!;
    expect(r.explainedFraction).toBe(0.5);
  });
  it("findings outside the window or on other combiners do not count; those without a flag are listed with their small loss", () => {
    const r = crossReference(
      [flag({ firstDay: "2026-10-10", lastDay: "2026-10-12" })],
      [finding({ id: "old", flownOn: "2026-08-01" }), finding({ id: "other", combinerId: 2, classKey: "bypass_diode_substring" })],
      { ...opts, windowDays: 30 },
    );
    expect(r.flags[0]!.explainedFraction).toBe(0);
    expect(r.flags[0]!.nextState).toBe("needs flight");
    expect(r.unflagged.map((u) => u.findingId).sort()).toEqual(["old", "other"]);
    expect(r.unflagged.find((u) => u.findingId === "other")!.expectedKwhPerDay).toBeCloseTo(60 / 84, 12);
  });
  it("never moves a flag people took further (in field, verifying, recovered, dismissed)", () => {
    for (const state of ["in field", "verifying", "recovered", "dismissed"]) expect(crossReference([flag({ state })], [finding({})], opts).flags[0]!.nextState).toBeNull();
    expect(crossReference([flag({ state: "explained" })], [], opts).flags[0]!.nextState).toBe("needs flight");
  });
  it("advice without findings says to fly", () => {
    expect(adviceFor({ combinerName: "B3-I2-C11", stringsOut: 2 }, [])).toBe("No finding yet: fly B3-I2-C11 (2 strings out) or measure its string currents.");
  });
  it("string energy estimate: 28 × 550 W × 6 kWh/m² × 0.8 = 73.92 kWh/day [X]", () => {
    expect(stringKwhPerDayEstimate(28, 550, 6)).toBeCloseTo(73.92, 9);
  });
});

const layout: LayoutString[] = [
  { id: 1, combinerId: 10, combinerName: "B1-I1-C01", number: 1, modules: 28, x: 0, y: 0 },
  { id: 2, combinerId: 10, combinerName: "B1-I1-C01", number: 2, modules: 28, x: 0, y: 10 },
  { id: 3, combinerId: 11, combinerName: "B1-I1-C02", number: 1, modules: 28, x: 30, y: 0 },
  { id: 4, combinerId: 11, combinerName: "B1-I1-C02", number: 2, modules: 28, x: null, y: null },
];

describe("nearest-string resolution", () => {
  const near = createNearestString(layout, 5);
  it("picks the closest string within the tolerance", () => {
    expect(near(1, 4)).toMatchObject({ string: { id: 1 }, distanceM: Math.hypot(1, 4) });
    expect(near(0.5, 6).string?.id).toBe(2);
    expect(near(29, -1).string?.id).toBe(3);
  });
  it("refuses beyond the tolerance and says how far the nearest is", () => {
    const r = near(0, 20);
    expect(r.string).toBeNull();
    expect(r.distanceM).toBeNull(); // nothing in the neighbouring cells at all
    const r2 = near(6, 0);
    expect(r2.string).toBeNull();
    expect(r2.distanceM).toBeCloseTo(6, 12);
  });
  it("parses a CSV with names and positions, all or nothing with line numbers", () => {
    const ok = parseFindingsCsv("string,x,y,class,delta_t_k,image,notes\nb1-i1-c01/2,,,String offline,4.0,ir-1.png,\n,29.5,0.5,soiling,,,\"dust,\nlower edge\"\n", layout);
    expect(ok.ok).toBe(true);
    if (!ok.ok) return;
    expect(ok.rows.map((r) => [r.line, r.stringId, r.classKey, r.deltaTK, r.image])).toEqual([
      [2, 2, "string_offline", 4, "ir-1.png"],
      [3, 3, "soiling", null, null],
    ]);
    const bad = parseFindingsCsv("string,x,y,class,delta_t_k\nB1-I1-C01/9,,,string offline,\nX9/1,,,soiling,\n,100,100,soiling,\nB1-I1-C01/1,,,delamination,\nB1-I1-C01/1,,,soiling,hot\nB1-I1-C01,,,soiling,\n", layout);
    expect(bad.ok).toBe(false);
    if (bad.ok) return;
    expect(bad.errors).toEqual([
      { line: 2, reason: "combiner B1-I1-C01 has no string 9" },
      { line: 3, reason: 'no combiner named "X9" in this site\'s layout' },
      { line: 4, reason: "no string within 5 m of (100, 100)" },
      { line: 5, reason: 'unknown class "delamination"' },
      { line: 6, reason: 'delta_t_k "hot" must be a temperature difference in kelvin (−50…200)' },
      { line: 7, reason: 'string "B1-I1-C01" must be written <combiner>/<string number>, e.g. B1-I2-C04/7' },
    ]);
    expect(parseFindingsCsv("string,notes\nB1-I1-C01/1,x\n", layout)).toMatchObject({ ok: false, errors: [{ line: 1, reason: "the header has no `class` column" }] });
  });
});

describe("clear-sky model shown on the fly list: Haurwitz GHI = 1098·cosZ·exp(−0.059/cosZ) (Reno, Hansen & Stein, SAND2012-2389) [X]", () => {
  it("worked values computed by hand from the published formula", () => {
    expect(haurwitzGhi(0)).toBeCloseTo(1035.0920, 3); // 1098 · e^−0.059
    expect(haurwitzGhi(30)).toBeCloseTo(888.2713, 3); // 950.896 · e^−0.068127
    expect(haurwitzGhi(60)).toBeCloseTo(487.8941, 3); // 549 · e^−0.118
    expect(haurwitzGhi(80)).toBeCloseTo(135.7417, 3);
    expect(CLEAR_SKY_MODEL.coefficients).toEqual({ a: 1098, b: 0.059, albedo: 0.2 });
  });
});

describe("mirror reflection off the module plane, from first principles (r = 2(n·s)n − s) [P]", () => {
  it("sun on the module normal → the reflection goes straight back toward the sun", () => {
    for (const [tilt, az] of [[30, 180], [10, 90], [55, 270]] as const) {
      const n = planeNormal(tilt, az);
      const r = specularReflection(n, n);
      n.forEach((x, i) => expect(r[i]).toBeCloseTo(x, 12));
      // a camera looking down the normal at the module sees the sun's reflection head-on: glare angle 0
      expect(glareAngle([-n[0], -n[1], -n[2]], r)).toBeCloseTo(0, 4); // acos near 1 loses digits
    }
  });
  it("angle of reflection equals angle of incidence, in the plane of sun and normal", () => {
    const n = planeNormal(30, 180);
    const s = sunVector(50, 220);
    const r = specularReflection(s, n);
    const dot = (a: readonly number[], b: readonly number[]) => a[0]! * b[0]! + a[1]! * b[1]! + a[2]! * b[2]!;
    expect(dot(r, n)).toBeCloseTo(dot(s, n), 12);
    expect(Math.hypot(...r)).toBeCloseTo(1, 12);
    const cross = [n[1] * s[2] - n[2] * s[1], n[2] * s[0] - n[0] * s[2], n[0] * s[1] - n[1] * s[0]];
    expect(dot(cross, r)).toBeCloseTo(0, 12);
  });
  it("nadir camera over a flat module with the sun overhead: glare angle 0", () => {
    expect(glareAngle(cameraViewVector(0, 90), specularReflection(sunVector(0, 0), planeNormal(0, 0)))).toBeCloseTo(0, 9);
  });
});

describe("flight timeline (15-minute rows, site zone)", () => {
  const site = { lat: 37.402, lon: -6.218, elevationM: 60, timezone: "Europe/Madrid", mounting: { kind: "fixed" as const, tilt: 30, azimuth: 180 } };
  it("7 days × 96 rows, local midnight first; a 25-hour day has 100 rows", () => {
    const days = flightTimeline("2026-10-20", site, { days: 7 });
    expect(days.map((d) => d.rows.length)).toEqual([96, 96, 96, 96, 96, 100, 96]);
    expect(days[0]!.rows[0]!.local).toBe("00:00");
    expect(days[0]!.rows[0]!.at.toISOString()).toBe("2026-10-19T22:00:00.000Z");
    expect(localMidnightUtc("2026-10-26", "Europe/Madrid")).toBe(Date.parse("2026-10-25T23:00:00Z"));
  });
  it("a clear October day at 37° N on a 30° south plane has a window around noon, split morning/afternoon", () => {
    const [d] = flightTimeline("2026-10-21", site, { days: 1, minPoa: 600 });
    expect(d!.windows.length).toBe(2);
    expect(d!.windows[0]!.morning).toBe(true);
    expect(d!.windows[1]!.morning).toBe(false);
    expect(d!.windows[0]!.end).toBe(d!.windows[1]!.start);
    const noon = d!.rows.find((r) => r.local === d!.solarNoonLocal)!;
    expect(noon.poa).toBeGreaterThan(850);
    expect(noon.irOk).toBe(true);
    expect(d!.rows.find((r) => r.local === "03:00")!.irOk).toBe(false);
    // at noon the sun is behind a camera that faces north toward the south-facing modules: glare there [P]
    expect(noon.glareHeadings.length).toBeGreaterThan(0);
  });
  it("heading ranges wrap round north", () => {
    expect(headingRanges([345, 0, 15, 180])).toEqual(["180° (S)", "345°–15° (NNW–NNE)"]);
  });
});

describe("flight conditions and camera plan", () => {
  const t = { irMinPoa: 600, irMaxWindKmh: 28, irMaxCloudOkta: 2 };
  it("plain warnings against the site's IR settings", () => {
    const c = checkConditions({ poaWm2: 480, windKmh: 30, cloudOkta: 1, ambientC: 38 }, t);
    expect(c.find((x) => x.key === "poa")).toEqual({ key: "poa", ok: false, message: "POA 480 W/m² is below the 600 W/m² minimum for this inspection" });
    expect(c.find((x) => x.key === "wind")!.ok).toBe(false);
    expect(c.find((x) => x.key === "cloud")!.ok).toBe(true);
    expect(c.find((x) => x.key === "ambient")!.message).toMatch(/battery temperature/);
  });
  it("17 µm, 13 mm, 40 m → 5.23 cm/px; 5 px per 18.2 cm cell below 27.8 m", () => {
    const p = cameraPlan({ widthPx: 640, heightPx: 512, pixelPitchUm: 17 }, 13, 0.182);
    expect(p.gsdCmAt(40)).toBeCloseTo(5.2308, 4);
    expect(p.cellLevelMaxAltitudeM).toBeCloseTo((0.182 / 5) * 0.013 / 17e-6, 9);
    expect(p.cellLevelMaxAltitudeM).toBeCloseTo(27.835, 3);
    expect(p.stringLevelMaxAltitudeM).toBeCloseTo(69.588, 3);
    expect(p.footprintAt(40).widthM).toBeCloseTo(33.477, 3);
  });
});
