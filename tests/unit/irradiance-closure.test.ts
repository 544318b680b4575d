import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { sunPosition } from "~/domain/sun";

// Real data: NREL MIDC, University of Arizona station, 2018-10-18, 1-minute, local standard
// time UTC−7 (pvlib-python test data, BSD-3-Clause). See fixtures/irradiance/README.md.
const file = fileURLToPath(new URL("../../fixtures/irradiance/midc-uat-2018-10-18-1min.csv", import.meta.url));
const rows = readFileSync(file, "utf8")
  .trim()
  .split("\n")
  .slice(1)
  .map((l) => l.split(",").map(Number));

const LAT = 32.22969;
const LON = -110.95534;

/** Relative closure residuals (DNI·cosZ + DHI − GHI)/GHI for zenith < 75°, GHI > 200. */
function residuals(lon: number, utcOffsetHours: number): number[] {
  const out: number[] = [];
  for (const f of rows) {
    const [, , doy, hhmm, dni, dhi, ghi] = f;
    if (dni === -7999 || dhi === -7999 || ghi === -7999) continue;
    const t = new Date(Date.UTC(2018, 0, doy, Math.floor(hhmm / 100) - utcOffsetHours, hhmm % 100));
    const z = sunPosition(t, LAT, lon, { elevationM: 786 }).zenith;
    if (z < 75 && ghi > 200) out.push((dni * Math.cos((z * Math.PI) / 180) + dhi - ghi) / ghi);
  }
  return out.sort((a, b) => a - b);
}
const q = (s: number[], p: number) => s[Math.floor(p * (s.length - 1))];

describe("irradiance closure on a real clear day", () => {
  it("DNI·cosZ + DHI ≈ GHI within the expected band", () => {
    // NREL MIDC UAT 2018-10-18 via pvlib-python test data [C data]; with NOAA equations the
    // 522 qualifying minutes close within −2.0 % … −0.9 % (5th–95th percentile) [X]
    const r = residuals(LON, -7);
    expect(r.length).toBeGreaterThan(500);
    expect(q(r, 0.05)).toBeGreaterThan(-0.025);
    expect(q(r, 0.95)).toBeLessThan(-0.005);
    expect(q(r, 0.5)).toBeGreaterThan(-0.022);
    expect(q(r, 0.5)).toBeLessThan(-0.012);
  });
  it("a wrong longitude sign breaks it", () => {
    const r = residuals(-LON, -7);
    // east longitude puts the sun below the horizon all (local) day: nothing qualifies
    expect(r.length).toBeLessThan(50);
  });
  it("a one-hour time-zone error breaks it", () => {
    const r = residuals(LON, -6);
    const spread = q(r, 0.95) - q(r, 0.05);
    expect(spread).toBeGreaterThan(0.05);
  });
});
