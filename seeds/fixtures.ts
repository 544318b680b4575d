/**
 * Builds the committed fixtures with the demo generator:
 *   fixtures/small/          one inverter, four 12-string combiners, one clear day, one open string
 *   fixtures/healthy-cloudy/ one inverter, eight 16-string combiners, no fault, driven by the
 *                            real cloudy day midc-2018-10-14 (NREL MIDC, 1-minute GHI, MST)
 *
 *   npx tsx seeds/fixtures.ts [--root fixtures]
 */
import { readFileSync, writeFileSync } from "node:fs";
import { join, resolve } from "node:path";
import { pathToFileURL } from "node:url";
import { generate, type GenerateResult } from "./generate";
import { DEMO_SITE, type SiteSpec } from "./plant";
import type { MeasuredWeather } from "./simulate";

export const SMALL_END = "2026-10-15";
export const CLOUDY_DATE = "2018-10-14";

/**
 * NREL MIDC station of the cloudy-day file. Its columns (Global PSP, temperature at 2, 50 and
 * 80 m) match the NWTC M2 tower near Boulder, Colorado; coordinates from memory, unconfirmed [M].
 */
export const CLOUDY_SITE: SiteSpec = {
  ...DEMO_SITE,
  name: "Healthy cloudy fixture (invented plant at the MIDC M2 tower location)",
  description: "Invented 2 MWdc fixed-tilt plant driven by real 1-minute GHI of 2018-10-14 (NREL MIDC); no fault.",
  lat: 39.9106,
  lon: -105.2347,
  elevationM: 1855,
  timeZone: "America/Denver",
};

export const SMALL_SITE: SiteSpec = {
  ...DEMO_SITE,
  name: "Small fixture (invented)",
  description: "One inverter, four 12-string combiners, one clear day, one open string; invented.",
};

/** Parse the MIDC cloudy-day file: minute index → GHI and 2 m air temperature (MST = UTC−7). */
export function readMidcCloudy(path: string): { startUtc: number; ghi: number[]; temp: number[] } {
  const lines = readFileSync(path, "utf8").trim().split(/\r?\n/);
  const ghi: number[] = [];
  const temp: number[] = [];
  let startUtc = NaN;
  for (const line of lines.slice(1)) {
    const [date, hhmm, g, , t2] = line.split(",");
    const [mo, da, yr] = date.split("/").map(Number);
    const [hh, mm] = hhmm.split(":").map(Number);
    const utc = Date.UTC(yr, mo - 1, da, hh + 7, mm);
    if (Number.isNaN(startUtc)) startUtc = utc;
    const i = Math.round((utc - startUtc) / 60_000);
    ghi[i] = Number(g);
    temp[i] = Number(t2);
  }
  return { startUtc, ghi, temp };
}

export function midcWeather(path: string): MeasuredWeather {
  const { startUtc, ghi, temp } = readMidcCloudy(path);
  const idx = (u: number) => Math.floor((u - startUtc) / 60_000);
  return {
    ghiAt: (u) => {
      const i = idx(u);
      return i >= 0 && i < ghi.length ? ghi[i] : undefined;
    },
    // outside the file (the first local hour, MDT vs MST) hold the nearest measured temperature
    ambientAt: (u) => temp[Math.min(temp.length - 1, Math.max(0, idx(u)))],
  };
}

export function buildFixtures(root: string): { small: GenerateResult; cloudy: GenerateResult } {
  const small = generate({
    out: join(root, "small"),
    seed: 7,
    end: SMALL_END,
    days: 1,
    site: SMALL_SITE,
    shape: { blocks: 1, invertersPerBlock: 1, combiners: 4, stringsFor: () => 12, dcAcRatio: 1.1 },
    scenario: "small",
    note: "fixtures/small: built by seeds/fixtures.ts (seed 7); fully synthetic",
  });
  writeFileSync(
    join(root, "small", "README.md"),
    `# fixtures/small

One invented inverter (B1-I1) with four 12-string combiners, one clear day (${SMALL_END}, Europe/Madrid),
5-minute data. B1-I1-C03 has string 5 open from the first interval: its current is 11/12 = 91.7 % of
its peers'. Fully synthetic (no real data), built by \`npx tsx seeds/fixtures.ts\` (seed 7) with the
demo generator; \`truth.json\` lists the planted fault. Formats: see \`seeds/README.md\`.
`,
  );
  const cloudy = generate({
    out: join(root, "healthy-cloudy"),
    seed: 11,
    end: CLOUDY_DATE,
    days: 1,
    site: CLOUDY_SITE,
    shape: { blocks: 1, invertersPerBlock: 1, combiners: 8, stringsFor: () => 16, dcAcRatio: 1.1 },
    scenario: "healthy",
    measured: midcWeather(resolve(root, "irradiance", "midc-2018-10-14-1min-ghi.csv")),
    note: "fixtures/healthy-cloudy: GHI and 2 m air temperature from NREL MIDC 2018-10-14 (pvlib-python test data, BSD-3-Clause); no fault",
  });
  writeFileSync(
    join(root, "healthy-cloudy", "README.md"),
    `# fixtures/healthy-cloudy

A small invented plant (one inverter B1-I1, eight 16-string combiners, fixed tilt 30° south) with
**no fault**, driven by a real day with passing clouds: the 1-minute global horizontal irradiance
(and 2 m air temperature) of ${CLOUDY_DATE} from NREL's Measurement and Instrumentation Data
Center (MIDC), Colorado, as redistributed in the test data of pvlib-python (BSD-3-Clause);
source file \`fixtures/irradiance/midc-2018-10-14-1min-ghi.csv\` (MST, UTC−7). The generator
averages it to 5 minutes, splits it with Erbs and transposes it to the plane; wind and module
temperatures are modelled. The plant is placed at the station (lat 39.9106, lon −105.2347, the
NWTC M2 tower as remembered, unconfirmed) in America/Denver, so timestamps carry −06:00 (MDT);
the first local hour lies before the file starts and is night. The analysis must raise no flag
on this plant. Built by \`npx tsx seeds/fixtures.ts\` (seed 11). Formats: see \`seeds/README.md\`.
`,
  );
  return { small, cloudy };
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  const i = process.argv.indexOf("--root");
  const root = resolve(i > 0 ? process.argv[i + 1] : "fixtures");
  const r = buildFixtures(root);
  for (const x of [r.small, r.cloudy]) console.log(`${x.out}: ${x.files.length} files, ${(x.bytes / 1e3).toFixed(0)} kB, ${x.rows} rows`);
}
