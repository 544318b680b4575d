/**
 * The generated data agree with truth.json: every planted fault is visible where and when the
 * truth says, and nothing else is. A reduced demo (64 combiners, 12 days across the October
 * clock change) keeps the test fast; fault positions fall back to free combiners.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { TruthFault } from "../../../seeds/faults";
import { generate, type GenerateResult } from "../../../seeds/generate";
import { buildPlant, DEMO_SHAPE } from "../../../seeds/plant";
import { createRng } from "../../../seeds/prng";
import { dateOf, median, readCsv, readJson, readReadings, type Readings } from "./read";

type Truth = {
  period: { start: string; end: string; days: number };
  plant: { blocks: number; inverters: number; combiners: number; strings: number };
  faults: Array<TruthFault & { expectedStatus?: string }>;
  findings: Array<{ string: string; class: string; explains: string | null }>;
  sky: Array<{ date: string; sky: string }>;
};
type Site = { inverters: Array<{ id: string; block: string; acRatingKw: number; dcKw: number }> };

const tmp = mkdtempSync(join(tmpdir(), "sunsift-seed-truth-"));
const out = join(tmp, "demo");
let res: GenerateResult;
let r: Readings;
let truth: Truth;
let site: Site;
let layout: Array<Record<string, string>>;
const END = "2026-10-30";
const DAYS = 12;

beforeAll(() => {
  res = generate({ out, seed: 42, end: END, days: DAYS, combiners: 64 });
  r = readReadings(out);
  truth = readJson<Truth>(out, "truth.json");
  site = readJson<Site>(out, "site.json");
  layout = readCsv(out, "layout.csv");
});
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const num = (s: string) => (s === "" ? NaN : Number(s));
const cur = (c: string) => `${c} DC Current [A]`;
const clearDays = () => new Set(truth.sky.filter((s) => s.sky === "clear").map((s) => s.date));
const faultsOf = (...kinds: string[]) => truth.faults.filter((f) => kinds.includes(f.kind));
const nStrings = (comb: string) => layout.filter((l) => l.combiner === comb).length;
/** combiners touched by any electrical or data fault (peers must be clean) */
const touched = () =>
  new Set(faultsOf("open_string", "blown_fuse", "stuck_sensor", "comm_outage", "shading").flatMap((f) => f.devices));

describe("counts and formats", () => {
  it("the full demo plant has 4 blocks, 16 inverters, 208 combiners, 3,264 strings of 28 × 550 W (≈ 50 MWdc)", () => {
    const p = buildPlant(DEMO_SHAPE, createRng(1));
    expect([p.blocks.length, p.inverters.length, p.combiners.length, p.stringCount]).toEqual([4, 16, 208, 3264]);
    expect(p.dcKw).toBeGreaterThan(40_000);
    expect(p.dcKw).toBeLessThan(60_000);
    const sizes = new Set(p.combiners.map((c) => c.strings.length));
    expect([...sizes].sort()).toEqual([12, 16]);
  });

  it("layout.csv: one row per string, names as specified", () => {
    expect(layout.length).toBe(res.plant.strings);
    expect(new Set(layout.map((l) => l.combiner)).size).toBe(64);
    expect(Object.keys(layout[0])).toEqual(["block", "inverter", "combiner", "string", "modules", "x", "y"]);
    const bad = layout.filter(
      (l) =>
        !/^B\d-I\d-C\d{2}$/.test(l.combiner) ||
        !l.combiner.startsWith(`${l.inverter}-`) ||
        !l.inverter.startsWith(`${l.block}-`) ||
        Number(l.modules) !== 28 ||
        !Number.isFinite(Number(l.x)) ||
        !Number.isFinite(Number(l.y)),
    );
    expect(bad).toEqual([]);
  });

  it("readings: timestamp + one column per combiner, DC and AC per inverter, five MET1 columns; mapping.json mirrors them", () => {
    expect(r.header[0]).toBe("timestamp");
    expect(r.header.length).toBe(1 + 64 + 2 * 16 + 5);
    const mapping = readJson<Array<{ header: string; device: string; metric: string; unit: string }>>(out, "mapping.json");
    expect(mapping.map((m) => m.header)).toEqual(r.header.slice(1));
    for (const m of mapping) {
      expect(m.header.endsWith(`[${m.unit}]`)).toBe(true);
      expect(m.header.startsWith(m.device + " ")).toBe(true);
    }
    expect(new Set(mapping.map((m) => m.metric))).toEqual(
      new Set(["dc_current", "dc_power", "ac_power", "poa_irradiance", "ghi", "ambient_temperature", "module_temperature", "wind_speed"]),
    );
  });

  it("5-minute rows labelled in Europe/Madrid with offsets, 12 days, 300 rows on the fall-back day", () => {
    // 2026-10-25 03:00 CEST → 02:00 CET: the 02:00–02:55 labels appear twice with different offsets [C, EU rule]
    const days = new Map<string, number>();
    let prev = NaN;
    for (const row of r.rows) {
      expect(row[0]).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:00[+-]\d{2}:\d{2}$/);
      const t = Date.parse(row[0]);
      if (!Number.isNaN(prev)) expect(t - prev).toBe(300_000);
      prev = t;
      days.set(dateOf(row[0]), (days.get(dateOf(row[0])) ?? 0) + 1);
    }
    expect(days.size).toBe(DAYS);
    expect([...days.keys()].at(-1)).toBe(END);
    expect(days.get("2026-10-25")).toBe(300);
    expect(days.get("2026-10-24")).toBe(288);
    const labels = new Set(r.rows.map((x) => x[0]));
    expect(labels.has("2026-10-25T02:05:00+02:00") && labels.has("2026-10-25T02:05:00+01:00")).toBe(true);
    expect(res.rows).toBe(DAYS * 288 + 12);
  });
});

describe("planted faults are visible where the truth says", () => {
  /** median over clear-day intervals (POA ≥ 600) of the combiner's per-string current ÷ clean peers' */
  function peerRatio(comb: string, from: string, to: string): { ratio: number; n: number } {
    const inv = comb.slice(0, comb.lastIndexOf("-"));
    const bad = touched();
    const peers = [...new Set(layout.filter((l) => l.inverter === inv && l.combiner !== comb && !bad.has(l.combiner)).map((l) => l.combiner))];
    expect(peers.length).toBeGreaterThan(0);
    const poa = r.col("MET1 POA Irradiance [W/m2]");
    const clear = clearDays();
    const N = nStrings(comb);
    const ratios: number[] = [];
    for (const row of r.rows) {
      const d = dateOf(row[0]);
      if (d < from || d > to || !clear.has(d) || num(row[poa]) < 600) continue;
      const peer = median(peers.map((p) => num(row[r.col(cur(p))]) / nStrings(p)));
      ratios.push(num(row[r.col(cur(comb))]) / N / peer);
    }
    return { ratio: ratios.length ? median(ratios) : NaN, n: ratios.length };
  }

  it("a combiner with k open strings of N carries (N − k)/N of its peers' current (± 1 %) [X, DOMAIN.md §10]", () => {
    let checked = 0;
    for (const f of faultsOf("open_string", "blown_fuse")) {
      if (f.kind !== "open_string" && f.kind !== "blown_fuse") continue;
      const comb = f.devices[0];
      const { ratio, n } = peerRatio(comb, f.start, f.end ?? truth.period.end);
      if (n === 0) continue; // no clear day inside this fault's window
      checked++;
      expect(f.effect.expectedRatio).toBeCloseTo((f.effect.stringsOnCombiner - f.effect.stringsOut) / f.effect.stringsOnCombiner, 9);
      expect(Math.abs(ratio - f.effect.expectedRatio), `${f.id} ${comb}`).toBeLessThan(0.01);
      // and before the fault the same combiner was level with its peers
      if (f.start > truth.period.start) {
        const before = peerRatio(comb, truth.period.start, prevDay(f.start));
        if (before.n > 0) expect(Math.abs(before.ratio - 1), `${f.id} before`).toBeLessThan(0.01);
      }
    }
    expect(checked).toBeGreaterThanOrEqual(4);
  });

  it("the blown fuse is repaired: the combiner is back with its peers from the repair day", () => {
    const [fuse] = faultsOf("blown_fuse");
    if (fuse.kind !== "blown_fuse") throw new Error();
    expect(fuse.effect.repairedOn).not.toBeNull();
    expect(fuse.expectedStatus).toBe("recovered");
    const after = peerRatio(fuse.devices[0], fuse.effect.repairedOn!, truth.period.end);
    if (after.n > 0) expect(Math.abs(after.ratio - 1)).toBeLessThan(0.01);
    const wo = readJson<Array<{ combiner: string; string: number; found: string; done: string; closedOn: string }>>(out, "work-orders.json");
    const w = wo.find((x) => x.combiner === fuse.devices[0])!;
    expect([w.found, w.done, w.closedOn]).toEqual(["fuse blown", "replaced fuse", fuse.effect.repairedOn]);
    expect(`${w.combiner}/${w.string}`).toBe(fuse.strings[0]);
  });

  it("the stuck sensor reads its constant on every interval of its window, day and night", () => {
    const [f] = faultsOf("stuck_sensor");
    if (f.kind !== "stuck_sensor") throw new Error();
    const c = r.col(cur(f.devices[0]));
    const inWindow = r.rows.filter((x) => dateOf(x[0]) >= f.start && dateOf(x[0]) <= f.end!);
    expect(inWindow.length).toBeGreaterThanOrEqual(288);
    expect(new Set(inWindow.map((x) => x[c]))).toEqual(new Set([f.effect.value.toFixed(2)]));
    const outside = r.rows.filter((x) => dateOf(x[0]) > f.end! || dateOf(x[0]) < f.start).map((x) => x[c]);
    expect(outside.some((v) => v !== f.effect.value.toFixed(2))).toBe(true);
  });

  it("the communication outage is empty cells for exactly its devices and hours, and there are no other empty cells", () => {
    const [f] = faultsOf("comm_outage");
    if (f.kind !== "comm_outage") throw new Error();
    const from = Date.parse(f.effect.from);
    const to = Date.parse(f.effect.to);
    const cols = new Set(r.header.flatMap((h, i) => (f.devices.some((d) => h.startsWith(`${d} `)) ? [i] : [])));
    expect(cols.size).toBe(f.devices.length - 1 + 2); // its combiners + the inverter's DC and AC
    let emptyIn = 0;
    const wrong: string[] = [];
    for (const row of r.rows) {
      const t = Date.parse(row[0]);
      for (let i = 0; i < row.length; i++) {
        const shouldBeEmpty = t >= from && t < to && cols.has(i);
        if (shouldBeEmpty) emptyIn++;
        if ((row[i] === "") !== shouldBeEmpty) wrong.push(`${row[0]} ${r.header[i]}`);
      }
    }
    expect(wrong.slice(0, 5)).toEqual([]);
    expect(emptyIn).toBe(f.effect.intervals * cols.size);
    expect(f.effect.intervals).toBe(60); // 10:00–15:00 local
  });

  it("clipping: the undersized inverter plateaus at its AC rating on clear noons; the others never reach theirs", () => {
    const [f] = faultsOf("clipping");
    if (f.kind !== "clipping") throw new Error();
    const inv = f.devices[0];
    const ac = r.col(`${inv} AC Power [kW]`);
    const clear = clearDays();
    const vals = r.rows.filter((x) => clear.has(dateOf(x[0]))).map((x) => num(x[ac]));
    const max = Math.max(...vals.filter(Number.isFinite));
    expect(Math.abs(max - f.effect.acLimitKw) / f.effect.acLimitKw).toBeLessThan(0.002);
    const plateau = vals.filter((v) => Math.abs(v - f.effect.acLimitKw) / f.effect.acLimitKw < 0.001).length;
    expect(plateau).toBeGreaterThanOrEqual(6); // ≥ 30 min of flat AC over the clear days
    for (const other of site.inverters.filter((i) => i.id !== inv)) {
      const c = r.col(`${other.id} AC Power [kW]`);
      const m = Math.max(...r.rows.map((x) => num(x[c])).filter(Number.isFinite));
      expect(m, other.id).toBeLessThan(other.acRatingKw * 0.99);
    }
  });

  it("the degraded inverter converts 4 % less: AC/DC is 0.96 of a healthy neighbour's at similar load", () => {
    const [f] = faultsOf("degraded_inverter");
    if (f.kind !== "degraded_inverter") throw new Error();
    const deg = f.devices[0];
    const block = deg.split("-")[0];
    const peer = site.inverters.find((i) => i.block === block && i.id !== deg && !truth.faults.some((x) => x.devices.includes(i.id)))!;
    const eff = (id: string) =>
      median(
        r.rows
          .map((x) => [num(x[r.col(`${id} DC Power [kW]`)]), num(x[r.col(`${id} AC Power [kW]`)])])
          .filter(([dc]) => dc > 0.4 * peer.dcKw)
          .map(([dc, ac]) => ac / dc),
      );
    expect(eff(deg) / eff(peer.id)).toBeCloseTo(f.effect.efficiencyFactor, 2);
    // combiner currents of the degraded inverter are normal (AC only)
    const combs = [...new Set(layout.filter((l) => l.inverter === deg).map((l) => l.combiner))].filter((c) => !touched().has(c));
    const peers = [...new Set(layout.filter((l) => l.inverter === peer.id).map((l) => l.combiner))].filter((c) => !touched().has(c));
    const perString = (cs: string[]) => median(r.rows.filter((x) => num(x[r.col("MET1 POA Irradiance [W/m2]")]) > 600).map((x) => median(cs.map((c) => num(x[r.col(cur(c))]) / nStrings(c)))));
    expect(Math.abs(perString(combs) / perString(peers) - 1)).toBeLessThan(0.01);
  });

  it("soiling lowers the whole soiled block by the planted loss relative to a clean block", () => {
    const [f] = faultsOf("soiling");
    if (f.kind !== "soiling") throw new Error();
    const block = f.devices[0];
    const clip = faultsOf("clipping")[0].devices[0];
    const bad = touched();
    const combsOf = (b: string) =>
      [...new Set(layout.filter((l) => l.block === b && l.inverter !== clip).map((l) => l.combiner))].filter((c) => !bad.has(c));
    const soiled = combsOf(block);
    const clean = combsOf(truth.faults.some((x) => x.kind === "soiling" && x.devices.includes("B1")) ? "B3" : "B1");
    const poa = r.col("MET1 POA Irradiance [W/m2]");
    const clear = clearDays();
    const days = truth.sky.map((s) => s.date);
    for (const d of days.filter((x) => clear.has(x))) {
      const rows = r.rows.filter((x) => dateOf(x[0]) === d && num(x[poa]) >= 600);
      if (!rows.length) continue;
      const ratio = median(rows.map((x) => median(soiled.map((c) => num(x[r.col(cur(c))]) / nStrings(c))) / median(clean.map((c) => num(x[r.col(cur(c))]) / nStrings(c)))));
      const i = days.indexOf(d);
      const ci = f.effect.cleanedOn ? days.indexOf(f.effect.cleanedOn) : Infinity;
      const loss = ci >= 0 && i >= ci ? f.effect.lossPerDay * (i - ci) : f.effect.lossAtStart + f.effect.lossPerDay * i;
      expect(Math.abs(ratio - (1 - loss)), d).toBeLessThan(0.006);
    }
  });

  it("the cloudy spell lowers plant-wide insolation well below a clear day's", () => {
    const [f] = faultsOf("cloudy_spell");
    if (f.kind !== "cloudy_spell") throw new Error();
    const poa = r.col("MET1 POA Irradiance [W/m2]");
    const daily = new Map<string, number>();
    for (const x of r.rows) daily.set(dateOf(x[0]), (daily.get(dateOf(x[0])) ?? 0) + Math.max(0, num(x[poa])) / 12000);
    const clear = median([...clearDays()].map((d) => daily.get(d)!));
    expect(daily.get(f.start)! / clear).toBeLessThan(0.6);
    for (const s of truth.sky.filter((x) => x.date >= f.start && x.date <= f.end!)) expect(s.sky).not.toBe("clear");
  });

  it("row-end shading only bites at low sun, below the analysis POA threshold", () => {
    const sh = faultsOf("shading");
    expect(sh.length).toBeGreaterThan(0);
    const poa = r.col("MET1 POA Irradiance [W/m2]");
    const clear = clearDays();
    const bad = touched();
    for (const f of sh) {
      if (f.kind !== "shading") throw new Error();
      expect(f.shouldFlag).toBe(false);
      expect(f.strings.every((s) => f.devices.includes(s.slice(0, s.lastIndexOf("/"))))).toBe(true);
      const comb = f.devices.find((d) => !faultsOf("open_string", "blown_fuse", "stuck_sensor", "comm_outage").some((x) => x.devices.includes(d)))!;
      const inv = comb.slice(0, comb.lastIndexOf("-"));
      const peer = [...new Set(layout.filter((l) => l.inverter === inv).map((l) => l.combiner))].find((c) => !bad.has(c));
      if (!peer) continue;
      let lowMin = Infinity;
      const high: number[] = [];
      for (const row of r.rows) {
        if (!clear.has(dateOf(row[0]))) continue;
        const g = num(row[poa]);
        const hour = Number(row[0].slice(11, 13));
        const ratio = num(row[r.col(cur(comb))]) / nStrings(comb) / (num(row[r.col(cur(peer))]) / nStrings(peer));
        if (g >= 600) high.push(ratio);
        else if (g > 30 && (f.effect.window === "morning" ? hour < 12 : hour >= 14)) lowMin = Math.min(lowMin, ratio);
      }
      expect(lowMin, `${f.id} ${comb} at low sun`).toBeLessThan(0.9);
      expect(Math.abs(median(high) - 1), `${f.id} ${comb} at POA ≥ 600`).toBeLessThan(0.01);
    }
  });
});

describe("flight, findings, images", () => {
  const CLASSES = [
    "cell hot spot",
    "several hot cells",
    "bypass-diode substring",
    "module open or short",
    "string offline",
    "hot connector or junction box",
    "broken glass",
    "soiling",
    "shading",
    "vegetation",
  ];
  it("findings use the fixed class list, name existing strings, and have their PNG (320×256)", () => {
    const findings = readCsv(out, "findings.csv");
    expect(Object.keys(findings[0])).toEqual(["string", "class", "delta_t_k", "image", "notes"]);
    const strings = new Set(layout.map((l) => `${l.combiner}/${l.string}`));
    for (const f of findings) {
      expect(CLASSES).toContain(f.class);
      expect(strings.has(f.string), f.string).toBe(true);
      const png = readFileSync(join(out, "images", f.image));
      expect(png.subarray(1, 4).toString("ascii")).toBe("PNG");
      expect([png.readUInt32BE(16), png.readUInt32BE(20)]).toEqual([320, 256]);
    }
  });

  it("strings offline / hot connector match the planted faults on flown blocks; others need a flight", () => {
    const flight = readJson<{ date: string; blocks: string[]; conditions: { poaWm2: number; windMs: number } }>(out, "flight.json");
    expect(flight.blocks.length).toBe(2);
    expect(flight.conditions.poaWm2).toBeGreaterThanOrEqual(600); // IEC TS 62446-3 default [M, DOMAIN.md §4]
    expect(flight.conditions.windMs * 3.6).toBeLessThanOrEqual(28);
    const findings = readCsv(out, "findings.csv");
    const big = findings.filter((f) => f.class === "string offline" || f.class === "hot connector or junction box").map((f) => f.string);
    const expected = faultsOf("open_string", "blown_fuse")
      .filter((f) => flight.blocks.includes(f.devices[0].split("-")[0]) && f.start <= flight.date && (f.end === null || f.end >= flight.date))
      .flatMap((f) => f.strings);
    expect(new Set(big)).toEqual(new Set(expected));
    expect(findings.some((f) => f.class === "hot connector or junction box")).toBe(true);
    const statuses = faultsOf("open_string", "blown_fuse").map((f) => f.expectedStatus);
    expect(statuses).toContain("needs flight");
    expect(statuses).toContain("explained");
    for (const f of faultsOf("open_string")) {
      const flown = flight.blocks.includes(f.devices[0].split("-")[0]) && f.start <= flight.date;
      expect(f.expectedStatus, f.id).toBe(flown ? "explained" : "needs flight");
    }
    // small defects lie on combiners without a planted fault
    const planted = new Set(faultsOf("open_string", "blown_fuse").flatMap((f) => f.devices));
    for (const f of findings.filter((x) => ["cell hot spot", "several hot cells", "bypass-diode substring"].includes(x.class)))
      expect(planted.has(f.string.split("/")[0])).toBe(false);
  });

  it("only strings-out faults should be flagged", () => {
    for (const f of truth.faults) expect(f.shouldFlag, f.id).toBe(f.kind === "open_string" || f.kind === "blown_fuse");
    expect(existsSync(join(out, "work-orders.json"))).toBe(true);
  });
});

function prevDay(d: string): string {
  const [y, m, dd] = d.split("-").map(Number);
  return new Date(Date.UTC(y, m - 1, dd - 1)).toISOString().slice(0, 10);
}
