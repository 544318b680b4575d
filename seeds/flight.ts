/**
 * The one past drone flight: flight.json, findings.csv and the drawn IR images. Findings follow
 * the planted truth: strings offline where open strings and the blown fuse lay on the flown
 * blocks at the flight date, a hot connector for the burnt connector, small cell-level defects
 * on healthy combiners, and soiling on the soiled block.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { parseStrRef, strRef, type TruthFault } from "./faults";
import { drawFinding, type ImageClass } from "./images";
import type { Plant } from "./plant";
import type { Rng } from "./prng";
import type { Scenario } from "./scenario";
import { csvCell } from "./write";

export interface Finding {
  string: string;
  class: ImageClass;
  delta_t_k: number;
  image: string;
  notes: string;
  /** truth only: the fault this finding shows, null for defects too small to matter */
  explains: string | null;
}

export interface FlightRecord {
  date: string;
  start: string;
  end: string;
  blocks: string[];
  pilot: string;
  aircraft: string;
  camera: string;
  altitudeM: number;
  conditions: { poaWm2: number; ambientC: number; windMs: number; cloudOkta: number; note: string };
  dataArchived: boolean;
  notes: string;
}

export function planFindings(plant: Plant, scenario: Scenario, rng: Rng): Finding[] {
  const fl = scenario.flight;
  if (!fl) return [];
  const flown = new Set(fl.blocks);
  const blockOf = (comb: string) => comb.split("-")[0];
  const out: Finding[] = [];
  const faulty = new Set<string>();
  for (const f of scenario.faults) if (f.kind === "open_string" || f.kind === "blown_fuse") f.devices.forEach((d) => faulty.add(d));
  const stuck = scenario.faults.filter((f) => f.kind === "stuck_sensor").flatMap((f) => f.devices);
  const active = (f: TruthFault) => f.start <= fl.date && (f.end === null || f.end >= fl.date);
  for (const f of scenario.faults) {
    if ((f.kind !== "open_string" && f.kind !== "blown_fuse") || !active(f)) continue;
    for (const ref of f.strings) {
      if (!flown.has(blockOf(parseStrRef(ref).combiner))) continue;
      const connector = f.kind === "open_string" && f.effect.cause.includes("burnt");
      out.push({
        string: ref,
        class: connector ? "hot connector or junction box" : "string offline",
        delta_t_k: round1(connector ? rng.uniform(24, 34) : rng.uniform(3.5, 6.5)),
        image: "",
        notes: connector
          ? "connector at the string end much hotter than its neighbours; string behind it uniformly warm"
          : "whole string uniformly warmer than its neighbours: check fuse, connectors and cable first",
        explains: f.id,
      });
    }
  }
  // Small defects on healthy combiners of the flown blocks.
  const healthy = plant.combiners.filter((c) => flown.has(c.block) && !faulty.has(c.id) && !stuck.includes(c.id));
  const small: Array<[ImageClass, number, number, string]> = [
    ["cell hot spot", 0.15, 11.8, "single hot cell, module otherwise normal"],
    ["cell hot spot", 0.55, 14.6, "single hot cell near the frame"],
    ["several hot cells", 0.35, 8.9, "four warm cells scattered over one module"],
    ["bypass-diode substring", 0.75, 6.8, "one third of a module warmer: bypass diode conducting"],
  ];
  for (const [cls, frac, dt, notes] of small) {
    if (healthy.length === 0) break;
    const c = healthy[Math.floor(frac * healthy.length)];
    const n = 1 + Math.floor(rng.next() * c.strings.length);
    out.push({ string: strRef(c.id, n), class: cls, delta_t_k: dt, image: "", notes, explains: null });
  }
  // Soiling on the soiled block, if flown.
  const soil = scenario.faults.find((f) => f.kind === "soiling");
  if (soil && flown.has(soil.devices[0])) {
    const combs = healthy.filter((c) => c.block === soil.devices[0]);
    for (const frac of [0.2, 0.5, 0.8]) {
      if (!combs.length) break;
      const c = combs[Math.floor(frac * combs.length)];
      out.push({
        string: strRef(c.id, 1 + Math.floor(rng.next() * c.strings.length)),
        class: "soiling",
        delta_t_k: round1(rng.uniform(1.5, 3)),
        image: "",
        notes: "even dust film, thicker along the lower module edge",
        explains: soil.id,
      });
    }
  }
  out.forEach((f, i) => {
    const { combiner, n } = parseStrRef(f.string);
    f.image = `ir-${String(i + 1).padStart(3, "0")}-${combiner}-s${String(n).padStart(2, "0")}.png`;
  });
  return out;
}

export function writeFlight(dir: string, record: FlightRecord, findings: Finding[], rng: Rng) {
  writeFileSync(join(dir, "flight.json"), JSON.stringify(record, null, 2) + "\n");
  const lines = ["string,class,delta_t_k,image,notes"];
  for (const f of findings) lines.push([f.string, f.class, f.delta_t_k.toFixed(1), f.image, f.notes].map(csvCell).join(","));
  writeFileSync(join(dir, "findings.csv"), lines.join("\n") + "\n");
  mkdirSync(join(dir, "images"), { recursive: true });
  for (const f of findings) writeFileSync(join(dir, "images", f.image), drawFinding(f.class, f.delta_t_k, rng.fork(f.image)));
}

function round1(v: number) {
  return Math.round(v * 10) / 10;
}
