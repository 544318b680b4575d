/** The committed fixtures: small enough to check by hand, and their truth holds in their data. */
import { readdirSync, statSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { readMidcCloudy } from "../../../seeds/fixtures";
import { median, readCsv, readJson, readReadings } from "./read";

const dirSize = (d: string) => readdirSync(d).reduce((s, f) => s + statSync(join(d, f)).size, 0);
const perString = (r: ReturnType<typeof readReadings>, row: string[], comb: string, n: number) =>
  Number(row[r.col(`${comb} DC Current [A]`)]) / n;

describe("fixtures/small", () => {
  const dir = "fixtures/small";
  const r = readReadings(dir);
  const truth = readJson<{ faults: Array<{ devices: string[]; strings: string[]; effect: { expectedRatio: number } }> }>(dir, "truth.json");

  it("is one inverter, four 12-string combiners, one day of 5-minute rows, under 1 MB", () => {
    const layout = readCsv(dir, "layout.csv");
    expect(layout.length).toBe(48);
    expect(new Set(layout.map((l) => l.inverter))).toEqual(new Set(["B1-I1"]));
    expect(new Set(layout.map((l) => l.combiner)).size).toBe(4);
    expect(r.rows.length).toBe(288);
    expect(r.header.length).toBe(1 + 4 + 2 + 5);
    expect(dirSize(dir)).toBeLessThan(1_000_000);
  });

  it("its one open string of 12 shows as 11/12 of the peers' current (± 1 %) [X, DOMAIN.md §1/§10]", () => {
    expect(truth.faults).toHaveLength(1);
    const [f] = truth.faults;
    expect(f.strings).toEqual(["B1-I1-C03/5"]);
    expect(f.effect.expectedRatio).toBeCloseTo(11 / 12, 9);
    const poa = r.col("MET1 POA Irradiance [W/m2]");
    const ratios = r.rows
      .filter((row) => Number(row[poa]) >= 600)
      .map((row) => perString(r, row, "B1-I1-C03", 12) / median(["C01", "C02", "C04"].map((c) => perString(r, row, `B1-I1-${c}`, 12))));
    expect(ratios.length).toBeGreaterThan(20);
    expect(Math.abs(median(ratios) - 11 / 12)).toBeLessThan(0.01);
  });
});

describe("fixtures/healthy-cloudy", () => {
  const dir = "fixtures/healthy-cloudy";
  const r = readReadings(dir);

  it("has no planted fault and stays under 1 MB", () => {
    expect(readJson<{ faults: unknown[] }>(dir, "truth.json").faults).toEqual([]);
    expect(dirSize(dir)).toBeLessThan(1_000_000);
    expect(r.rows.length).toBe(288);
    expect(r.rows[0][0]).toBe("2018-10-14T00:00:00-06:00"); // America/Denver, MDT in October [C, tz database]
  });

  it("MET1 GHI is the real MIDC 1-minute GHI averaged to 5 minutes (± 1.5 %, sensor noise 0.5 %)", () => {
    const { startUtc, ghi } = readMidcCloudy("fixtures/irradiance/midc-2018-10-14-1min-ghi.csv");
    const col = r.col("MET1 GHI [W/m2]");
    let checked = 0;
    for (const row of r.rows) {
      const t = Date.parse(row[0]);
      const i = Math.round((t - startUtc) / 60_000);
      if (i < 0 || i + 5 > ghi.length) continue;
      const avg = ghi.slice(i, i + 5).reduce((a, b) => a + b, 0) / 5;
      if (avg < 100) continue;
      expect(Math.abs(Number(row[col]) - avg) / avg, row[0]).toBeLessThan(0.015);
      checked++;
    }
    expect(checked).toBeGreaterThan(60);
  });

  it("is really cloudy: large 5-minute POA ramps [C, data/README.md: 28 one-minute jumps > 100 W/m²]", () => {
    const poa = r.rows.map((row) => Number(row[r.col("MET1 POA Irradiance [W/m2]")]));
    const ramps = poa.slice(1).filter((v, i) => Math.abs(v - poa[i]) > 100).length;
    expect(ramps).toBeGreaterThan(5);
  });

  it("all combiners stay within half a string of each other (no strings-out deficit) [P, DESIGN.md flag rule]", () => {
    const combs = r.header.filter((h) => h.endsWith("DC Current [A]"));
    const poa = r.col("MET1 POA Irradiance [W/m2]");
    let worst = 0;
    for (const row of r.rows) {
      if (Number(row[poa]) < 200) continue;
      const vals = combs.map((c) => Number(row[r.col(c)]));
      const m = median(vals);
      for (const v of vals) worst = Math.max(worst, Math.abs(v / m - 1));
    }
    // half a string of 16 is 3.1 %; mismatch (±1 %/string) and sensor noise (0.5 %) stay far below
    expect(worst).toBeLessThan(0.025);
  });
});
