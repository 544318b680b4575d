/**
 * Demo plant generator: writes what an invented plant would export (layout, monthly wide
 * SCADA CSVs, column mapping, site settings), one drone flight with findings and IR images,
 * past work orders, and the planted truth. Deterministic: same options → same bytes.
 *
 *   npx tsx seeds/generate.ts --out DIR [--seed 42] [--end 2026-11-30] [--days 60] [--combiners 208]
 */
import { existsSync, mkdirSync, readdirSync, rmSync, statSync } from "node:fs";
import { join, resolve } from "node:path";
import { pathToFileURL } from "node:url";
import { buildEffects } from "./faults";
import { planFindings, writeFlight, type Finding, type FlightRecord } from "./flight";
import { buildPlant, DEMO_SHAPE, DEMO_SITE, type Plant, type PlantShape, type SiteSpec } from "./plant";
import { createRng } from "./prng";
import { demoScenario, healthyScenario, smallScenario, type Scenario } from "./scenario";
import { columnsFor, simulate, type MeasuredWeather } from "./simulate";
import { addDays, formatLocalIso, localToUtc, yesterdayIn } from "./time";
import { MonthlyCsvWriter, siteJson, writeJson, writeLayout, writeMapping } from "./write";
import { sunPosition } from "../app/domain/sun";

export const GENERATOR_VERSION = "sunsift-demo-generator/1";

export interface GenerateOptions {
  out: string;
  seed?: number;
  /** last local date of data (inclusive), default yesterday in the site's zone */
  end?: string;
  days?: number;
  /** total combiners (the demo plant has 208); ignored when `shape` is given */
  combiners?: number;
  shape?: PlantShape;
  site?: SiteSpec;
  scenario?: "demo" | "small" | "healthy";
  measured?: MeasuredWeather;
  /** extra README-style note stored in truth.json */
  note?: string;
  /** empty the output directory first (default true) */
  clean?: boolean;
  /**
   * Write night rows too (default true). Many plant loggers record only from dawn to dusk; the
   * demo seed leaves night out so that it loads in half the time.
   */
  nightRows?: boolean;
}

export interface GenerateResult {
  out: string;
  files: string[];
  bytes: number;
  rows: number;
  plant: { blocks: number; inverters: number; combiners: number; strings: number; dcKw: number; acKw: number };
  start: string;
  end: string;
  ms: number;
}

export function generate(opts: GenerateOptions): GenerateResult {
  const t0 = performance.now();
  const site = opts.site ?? DEMO_SITE;
  const seed = opts.seed ?? 42;
  const days = opts.days ?? 60;
  const end = opts.end ?? yesterdayIn(site.timeZone);
  if (!/^\d{4}-\d{2}-\d{2}$/.test(end)) throw new Error(`--end must be YYYY-MM-DD, got ${end}`);
  if (!(days >= 1)) throw new Error("--days must be at least 1");
  const dates = Array.from({ length: days }, (_, i) => addDays(end, i - days + 1));
  const out = resolve(opts.out);
  if (opts.clean !== false && existsSync(out)) {
    // only ever empty a directory that holds a previous output (or nothing)
    const entries = readdirSync(out);
    if (entries.length > 0 && !entries.includes("truth.json"))
      throw new Error(`${out} is not empty and holds no previous output (truth.json): refusing to clear it`);
    rmSync(out, { recursive: true, force: true });
  }
  mkdirSync(out, { recursive: true });

  const rng = createRng(seed);
  const shape = opts.shape ?? { ...DEMO_SHAPE, combiners: opts.combiners ?? DEMO_SHAPE.combiners };
  const plant: Plant = buildPlant(shape, rng.fork("plant"), site);
  const kind = opts.scenario ?? "demo";
  const scenario: Scenario =
    kind === "demo" ? demoScenario(plant, dates) : kind === "small" ? smallScenario(plant, dates) : healthyScenario();
  const effects = buildEffects(plant, dates, scenario.faults, (iso) => Date.parse(iso));
  for (const [d, sky] of scenario.forcedSky) if (!effects.sky.has(d)) effects.sky.set(d, sky);

  const columns = columnsFor(plant);
  const writer = new MonthlyCsvWriter(out, ["timestamp", ...columns.map((c) => c.header)].join(","));
  const [fh, fm] = (scenario.flight?.localTime ?? "13:30").split(":").map(Number);
  const flightStartMs = scenario.flight ? localToUtc(scenario.flight.date, site.timeZone, fh, fm) : NaN;
  let flightCells: string[] | null = null;
  const sim = simulate({
    plant,
    dates,
    effects,
    rng: rng.fork("sim"),
    measured: opts.measured,
    onRow: (t, label, cells) => {
      // Civil twilight: 6° below the horizon, with the interval's end as the test.
      if (opts.nightRows === false && sunPosition(new Date(t), site.lat, site.lon).elevation < -6 && sunPosition(new Date(t + 300_000), site.lat, site.lon).elevation < -6) return;
      writer.row(label, cells);
      if (t === flightStartMs) flightCells = cells;
    },
  });
  writer.close();

  writeLayout(out, plant);
  writeMapping(out, columns);
  writeJson(out, "site.json", siteJson(plant));

  let findings: Finding[] = [];
  if (scenario.flight) {
    findings = planFindings(plant, scenario, rng.fork("findings"));
    const fc = (flightCells ?? []) as string[];
    const met = (h: string) => Number(fc[columns.findIndex((c) => c.header === h) + 1] ?? NaN);
    const record: FlightRecord = {
      date: scenario.flight.date,
      start: formatLocalIso(flightStartMs, site.timeZone),
      end: formatLocalIso(flightStartMs + 80 * 60_000, site.timeZone),
      blocks: scenario.flight.blocks,
      pilot: "Marta Quintero (invented)",
      aircraft: "quadcopter (generic), 4 batteries",
      camera: "640×512 radiometric thermal camera, 13 mm lens, plus 12 MP visual camera",
      altitudeM: 25,
      conditions: {
        poaWm2: Math.round(met("MET1 POA Irradiance [W/m2]")),
        ambientC: Math.round(met("MET1 Ambient Temp [degC]") * 10) / 10,
        windMs: Math.round(met("MET1 Wind Speed [m/s]") * 10) / 10,
        cloudOkta: 0,
        note: "clear sky, POA above 600 W/m² throughout; conditions from MET1 at take-off",
      },
      dataArchived: true,
      notes: `Blocks ${scenario.flight.blocks.join(" and ")} flown in parallel passes along the rows; camera ~10° off nadir to avoid sun reflections.`,
    };
    writeFlight(out, record, findings, rng.fork("images"));
  }
  if (scenario.workOrders.length) writeJson(out, "work-orders.json", scenario.workOrders);

  const explained = new Map<string, string[]>();
  for (const f of findings) if (f.explains && f.class !== "soiling") explained.set(f.explains, [...(explained.get(f.explains) ?? []), f.string]);
  const truth = {
    generator: GENERATOR_VERSION,
    seed,
    scenario: scenario.name,
    note: opts.note ?? null,
    site: { name: site.name, timezone: site.timeZone, lat: site.lat, lon: site.lon },
    period: { start: dates[0], end: dates.at(-1)!, days, intervalMinutes: 5, labels: "interval start" },
    plant: summary(plant),
    faults: scenario.faults.map((f) => ({
      ...f,
      ...(f.shouldFlag
        ? {
            expectedStatus:
              f.effect && "repairedOn" in f.effect && f.effect.repairedOn && f.effect.repairedOn <= dates.at(-1)!
                ? "recovered"
                : explained.has(f.id)
                  ? "explained"
                  : "needs flight",
          }
        : {}),
    })),
    findings: findings.map((f) => ({ string: f.string, class: f.class, explains: f.explains })),
    sky: sim.days.map((d) => ({ date: d.date, sky: d.sky })),
  };
  writeJson(out, "truth.json", truth);

  const files = listFiles(out);
  const bytes = files.reduce((s, f) => s + statSync(join(out, f)).size, 0);
  return { out, files, bytes, rows: sim.rows, plant: summary(plant), start: dates[0], end: dates.at(-1)!, ms: performance.now() - t0 };
}

function summary(p: Plant) {
  return { blocks: p.blocks.length, inverters: p.inverters.length, combiners: p.combiners.length, strings: p.stringCount, dcKw: p.dcKw, acKw: p.acKw };
}


function listFiles(dir: string, prefix = ""): string[] {
  return readdirSync(join(dir, prefix), { withFileTypes: true })
    .flatMap((e) => (e.isDirectory() ? listFiles(dir, join(prefix, e.name)) : [join(prefix, e.name)]))
    .sort();
}

/** The options of the command line, or null when it asks for the usage text. */
function parseArgs(argv: string[]): GenerateOptions | null {
  const o: GenerateOptions = { out: ".data/demo-plant" };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const v = () => {
      const x = argv[++i];
      if (x === undefined) throw new Error(`${a} needs a value`);
      return x;
    };
    if (a === "--out") o.out = v();
    else if (a === "--seed") o.seed = Number(v());
    else if (a === "--end") o.end = v();
    else if (a === "--days") o.days = Number(v());
    else if (a === "--combiners") o.combiners = Number(v());
    else if (a === "--help" || a === "-h") return null;
    else throw new Error(`unknown argument ${a}`);
  }
  return o;
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  const opts = parseArgs(process.argv.slice(2));
  if (!opts) {
    console.log("usage: npx tsx seeds/generate.ts --out DIR [--seed 42] [--end YYYY-MM-DD] [--days 60] [--combiners 208]");
  } else {
    const r = generate(opts);
    console.log(
      `wrote ${r.files.length} files (${(r.bytes / 1e6).toFixed(1)} MB) to ${r.out}: ${r.plant.combiners} combiners, ` +
        `${r.plant.strings} strings, ${r.rows} rows ${r.start}…${r.end} in ${(r.ms / 1000).toFixed(1)} s`,
    );
  }
}
