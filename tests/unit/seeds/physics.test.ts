import { describe, expect, it } from "vitest";
import { solarNoonUtc, sunPosition } from "../../../app/domain/sun";
import { sandiaCellTemp, sandiaModuleTemp } from "../../../app/domain/temperature";
import { DEMO_SITE, MODULE_550 } from "../../../seeds/plant";
import { pvwattsEfficiency } from "../../../seeds/simulate";
import { irradianceAt } from "../../../seeds/weather";
import { median, readReadings } from "./read";

describe("module datasheet", () => {
  it("is a consistent 550 W mono PERC", () => {
    // Vmp·Imp = Pmp within 0.1 % [X]; coefficients inside the validator bounds of DOMAIN.md §7 [P]
    expect(Math.abs(MODULE_550.vmp * MODULE_550.imp - 550) / 550).toBeLessThan(0.001);
    expect(MODULE_550.imp).toBeLessThan(MODULE_550.isc);
    expect(MODULE_550.vmp).toBeLessThan(MODULE_550.voc);
    expect(MODULE_550.gammaPmpPct).toBeGreaterThanOrEqual(-0.6);
    expect(MODULE_550.gammaPmpPct).toBeLessThanOrEqual(-0.2);
    expect(MODULE_550.betaVocPct).toBeGreaterThanOrEqual(-0.45);
    expect(MODULE_550.alphaIscPct).toBeGreaterThan(0);
  });
  it("28 modules per string stay within 1500 V at the site's coldest ambient", () => {
    // NEC 690.7(A) Table factor 1.12 for −1…−5 °C [C via DOMAIN.md §8] would give 1565 V; the
    // datasheet βVoc at −2 °C gives 49.9·(1 + 0.0027·27)·28 = 1499 V [X]: the usual Spanish sizing.
    const voc = MODULE_550.voc * (1 + (-MODULE_550.betaVocPct / 100) * 27) * DEMO_SITE.modulesPerString;
    expect(voc).toBeLessThan(1500);
  });
});

describe("temperature model used by the generator (Sandia, SAND2004-3535)", () => {
  it("reproduces the published and computed vectors for the demo's module type", () => {
    // E 1000, Ta 25, WS 1, glass/polymer open rack → Tm 51.3839, Tc 54.3839 [X, DOMAIN.md §5]
    expect(DEMO_SITE.moduleType).toBe("glass_polymer_open_rack");
    expect(sandiaModuleTemp(1000, 25, 1, DEMO_SITE.moduleType)).toBeCloseTo(51.3839, 3);
    expect(sandiaCellTemp(1000, 25, 1, DEMO_SITE.moduleType)).toBeCloseTo(54.3839, 3);
    // E 1000, Ta 10, WS 0, glass/glass open rack → Tc 44.11703066 [C, pvlib docstring]
    expect(sandiaCellTemp(1000, 10, 0, "glass_glass_open_rack")).toBeCloseTo(44.11703066, 6);
  });
  it("the MET1 module temperature in the small fixture follows Sandia from MET1 POA, ambient and wind", () => {
    // generator: Tm = Sandia(POA, Ta, WS) + sensor noise σ 0.3 °C; residual median < 0.5 °C [X]
    const r = readReadings("fixtures/small");
    const [poa, ta, tm, ws] = ["POA Irradiance [W/m2]", "Ambient Temp [degC]", "Module Temp [degC]", "Wind Speed [m/s]"].map((h) => r.col(`MET1 ${h}`));
    const res = r.rows
      .filter((row) => Number(row[poa]) > 200)
      .map((row) => Math.abs(Number(row[tm]) - sandiaModuleTemp(Number(row[poa]), Number(row[ta]), Number(row[ws]), "glass_polymer_open_rack")));
    expect(res.length).toBeGreaterThan(50);
    expect(median(res)).toBeLessThan(0.5);
  });
});

describe("clear-sky irradiance on the demo plane", () => {
  const noon = solarNoonUtc(new Date(Date.UTC(2026, 9, 15)), DEMO_SITE.lon);
  it("near solar noon on a clear mid-October day POA is 800–1100 W/m² [P]", () => {
    const x = irradianceAt(noon.getTime(), DEMO_SITE, { kc: 1 });
    expect(x.poa).toBeGreaterThan(800);
    expect(x.poa).toBeLessThan(1100);
    expect(x.ghi).toBeLessThan(x.poa); // a 30° south plane gains on GHI in autumn [P]
  });
  it("at solar noon the beam meets a south-facing plane at |zenith − tilt| [X, geometry]", () => {
    const sun = sunPosition(noon, DEMO_SITE.lat, DEMO_SITE.lon, { elevationM: DEMO_SITE.elevationM });
    const x = irradianceAt(noon.getTime(), DEMO_SITE, { kc: 1 });
    // beam = DNI·cos(aoi); with aoi = |Z − tilt| the beam share is large on a clear day
    expect(Math.abs(sun.apparentZenith - DEMO_SITE.mounting.tilt)).toBeLessThan(30);
    expect(x.beam / x.poa).toBeGreaterThan(0.75);
  });
  it("noon POA falls from October to the end of November (lower sun) [P]", () => {
    const nov = solarNoonUtc(new Date(Date.UTC(2026, 10, 30)), DEMO_SITE.lon);
    expect(irradianceAt(nov.getTime(), DEMO_SITE, { kc: 1 }).poa).toBeLessThan(irradianceAt(noon.getTime(), DEMO_SITE, { kc: 1 }).poa);
  });
});

describe("PVWatts v5 inverter curve (Dobos 2014) as used by the generator", () => {
  it("matches the computed vectors of DOMAIN.md §6 [X]", () => {
    // ηnom 0.96, ηref 0.9637: η(0.1) 0.921628, η(0.5) 0.962192, η(1.0) 0.960000
    expect(pvwattsEfficiency(0.1, 1, 0.96)).toBeCloseTo(0.921628, 6);
    expect(pvwattsEfficiency(0.5, 1, 0.96)).toBeCloseTo(0.962192, 6);
    expect(pvwattsEfficiency(1, 1, 0.96)).toBeCloseTo(0.96, 6);
  });
});

describe("combiner current model (DESIGN.md: I = n · Imp · G/1000 · (1 + α(Tc − 25)))", () => {
  it("healthy combiners of the small fixture carry the expected current within 2 % at POA ≥ 600", () => {
    const r = readReadings("fixtures/small");
    const [poa, ta, ws] = ["POA Irradiance [W/m2]", "Ambient Temp [degC]", "Wind Speed [m/s]"].map((h) => r.col(`MET1 ${h}`));
    const ratios: number[] = [];
    for (const row of r.rows) {
      const g = Number(row[poa]);
      if (g < 600) continue;
      const tc = sandiaCellTemp(g, Number(row[ta]), Number(row[ws]), "glass_polymer_open_rack");
      const expected = 12 * MODULE_550.imp * (g / 1000) * (1 + (MODULE_550.alphaIscPct / 100) * (tc - 25));
      ratios.push(Number(row[r.col("B1-I1-C01 DC Current [A]")]) / expected);
    }
    expect(ratios.length).toBeGreaterThan(20);
    expect(Math.abs(median(ratios) - 1)).toBeLessThan(0.02);
  });
});
