/**
 * The invented demo plant: site, module datasheet, and the block → inverter → combiner →
 * string tree with x/y positions. Fixed-tilt tables (2 modules high in portrait, 28 wide,
 * one string per module row), rows facing south; a combiner's strings sit on adjacent tables.
 *
 * Coordinates: metres, x east, y north, origin at the south-west corner of the plant.
 */
import type { Rng } from "./prng";

export type SandiaType = "glass_polymer_open_rack";

export interface ModuleSpec {
  model: string;
  pmp: number;
  vmp: number;
  imp: number;
  voc: number;
  isc: number;
  /** temperature coefficients as datasheets print them, %/°C */
  alphaIscPct: number;
  betaVocPct: number;
  gammaPmpPct: number;
  lengthM: number;
  widthM: number;
}

/**
 * A generic 144 half-cell mono PERC 550 W module (values typical of such datasheets [P]; no
 * particular manufacturer). Vmp·Imp = 550.1 W.
 */
export const MODULE_550: ModuleSpec = {
  model: "generic mono PERC 550 W, 144 half-cells",
  pmp: 550,
  vmp: 41.96,
  imp: 13.11,
  voc: 49.9,
  isc: 13.98,
  alphaIscPct: 0.048,
  betaVocPct: -0.27,
  gammaPmpPct: -0.35,
  lengthM: 2.279,
  widthM: 1.134,
};

export interface SiteSpec {
  name: string;
  description: string;
  lat: number;
  lon: number;
  elevationM: number;
  timeZone: string;
  mounting: { kind: "fixed"; tilt: number; azimuth: number };
  albedo: number;
  module: ModuleSpec;
  modulesPerString: number;
  moduleType: SandiaType;
  currency: string;
  tariffPerMwh: number;
}

/** Fictional site in south-western Spain (coordinates chosen in open farmland; name invented). */
export const DEMO_SITE: SiteSpec = {
  name: "Dehesa Clara Solar (demo)",
  description:
    "Invented 50 MWdc fixed-tilt plant in a fictional spot of south-western Spain; no real plant, company or person.",
  lat: 37.402,
  lon: -6.218,
  elevationM: 60,
  timeZone: "Europe/Madrid",
  mounting: { kind: "fixed", tilt: 30, azimuth: 180 },
  albedo: 0.2,
  module: MODULE_550,
  modulesPerString: 28,
  moduleType: "glass_polymer_open_rack",
  currency: "EUR",
  tariffPerMwh: 55,
};

export interface StringDef {
  n: number;
  modules: number;
  x: number;
  y: number;
  /** table column inside the combiner's patch (0 = west table, 1 = east table) */
  tableCol: number;
  /** fixed mismatch of this string's current, fraction (±1 %) */
  mismatch: number;
}

export interface CombinerDef {
  id: string;
  block: string;
  inverter: string;
  /** 1-based position inside its inverter */
  index: number;
  strings: StringDef[];
  /** combiner column inside its block (0 = westernmost) and how many columns the block has */
  blockCol: number;
  blockCols: number;
}

export interface InverterDef {
  id: string;
  block: string;
  combiners: CombinerDef[];
  dcKw: number;
  acRatingKw: number;
  /** PVWatts nominal efficiency */
  etaNominal: number;
}

export interface Plant {
  site: SiteSpec;
  blocks: string[];
  inverters: InverterDef[];
  combiners: CombinerDef[];
  stringCount: number;
  dcKw: number;
  acKw: number;
}

export interface PlantShape {
  blocks: number;
  invertersPerBlock: number;
  /** total combiners, spread evenly over the inverters */
  combiners: number;
  /** strings of a combiner given its 1-based index and the inverter's combiner count */
  stringsFor?: (index: number, count: number) => number;
  /** DC/AC ratio of ordinary inverters (rated so they do not clip in this climate) */
  dcAcRatio: number;
  /** the one inverter sized to clip on clear noons, and its DC/AC ratio */
  clippingInverter?: { id: string; dcAcRatio: number };
}

/** 16 strings per combiner; the last combiner of an inverter with ≥ 4 is a short 12-string row end. */
export const defaultStringsFor = (index: number, count: number): number => (count >= 4 && index === count ? 12 : 16);

export const DEMO_SHAPE: PlantShape = {
  blocks: 4,
  invertersPerBlock: 4,
  combiners: 208,
  dcAcRatio: 1.1,
  clippingInverter: { id: "B2-I2", dcAcRatio: 1.38 },
};

const TABLE_LEN = 28 * MODULE_550.widthM + 0.5; // 28 modules in portrait side by side, m
const ROW_PITCH = 10; // m, north–south distance between table rows (GCR ≈ 0.46)
const SLOT_W = 2 * (TABLE_LEN + 1) + 6; // combiner patch: two tables across + a 6 m aisle
const SLOT_H = 6 * ROW_PITCH + 5; // room for up to 24 strings (6 rows) + a 5 m track
const COMB_COLS = 4; // combiners across per inverter field
const ROAD = 12; // m between inverter fields and blocks

export const pad2 = (n: number) => String(n).padStart(2, "0");

export function buildPlant(shape: PlantShape, rng: Rng, site: SiteSpec = DEMO_SITE): Plant {
  const stringsFor = shape.stringsFor ?? defaultStringsFor;
  const nInv = shape.blocks * shape.invertersPerBlock;
  const blocks: string[] = [];
  const inverters: InverterDef[] = [];
  const combiners: CombinerDef[] = [];
  const perInv = (i: number) => Math.floor(shape.combiners / nInv) + (i < shape.combiners % nInv ? 1 : 0);
  const maxPerInv = perInv(0);
  const fieldRows = Math.ceil(maxPerInv / COMB_COLS);
  const fieldW = COMB_COLS * SLOT_W + ROAD;
  const fieldH = fieldRows * SLOT_H + ROAD;
  const invCols = Math.ceil(Math.sqrt(shape.invertersPerBlock));
  const invRows = Math.ceil(shape.invertersPerBlock / invCols);
  const blockW = invCols * fieldW + ROAD;
  const blockH = invRows * fieldH + ROAD;
  const blockCols = Math.ceil(Math.sqrt(shape.blocks));
  const blockRows = Math.ceil(shape.blocks / blockCols);
  const stringPowerKw = (site.module.pmp * site.modulesPerString) / 1000;
  const etaNominal = 0.98;
  let invIdx = 0;
  for (let b = 0; b < shape.blocks; b++) {
    const block = `B${b + 1}`;
    blocks.push(block);
    // B1 north-west, B2 north-east, B3 south-west, B4 south-east (quadrants)
    const bx = (b % blockCols) * blockW;
    const by = (blockRows - 1 - Math.floor(b / blockCols)) * blockH;
    for (let i = 0; i < shape.invertersPerBlock; i++, invIdx++) {
      const id = `${block}-I${i + 1}`;
      const fx = bx + (i % invCols) * fieldW;
      const fy = by + (invRows - 1 - Math.floor(i / invCols)) * fieldH;
      const n = perInv(invIdx);
      const inv: InverterDef = { id, block, combiners: [], dcKw: 0, acRatingKw: 0, etaNominal };
      for (let c = 1; c <= n; c++) {
        const ns = stringsFor(c, n);
        const col = (c - 1) % COMB_COLS;
        const row = Math.floor((c - 1) / COMB_COLS);
        const sx = fx + col * SLOT_W;
        const syTop = fy + fieldH - ROAD - row * SLOT_H; // north edge of the slot
        const strings: StringDef[] = [];
        for (let s = 1; s <= ns; s++) {
          const table = Math.floor((s - 1) / 2); // two strings per table (upper and lower module row)
          const tableCol = table % 2;
          const tableRow = Math.floor(table / 2);
          const upper = (s - 1) % 2 === 0;
          strings.push({
            n: s,
            modules: site.modulesPerString,
            x: round1(sx + tableCol * (TABLE_LEN + 1) + TABLE_LEN / 2),
            y: round1(syTop - tableRow * ROW_PITCH - (upper ? 1.14 : 3.42)),
            tableCol,
            mismatch: rng.uniform(-0.01, 0.01),
          });
        }
        const comb: CombinerDef = {
          id: `${id}-C${pad2(c)}`,
          block,
          inverter: id,
          index: c,
          strings,
          blockCol: (i % invCols) * COMB_COLS + col,
          blockCols: invCols * COMB_COLS,
        };
        inv.combiners.push(comb);
        combiners.push(comb);
        inv.dcKw += ns * stringPowerKw;
      }
      const ratio = shape.clippingInverter?.id === id ? shape.clippingInverter.dcAcRatio : shape.dcAcRatio;
      inv.dcKw = round1(inv.dcKw);
      inv.acRatingKw = Math.round(inv.dcKw / ratio / 10) * 10;
      inverters.push(inv);
    }
  }
  const stringCount = combiners.reduce((s, c) => s + c.strings.length, 0);
  return {
    site,
    blocks,
    inverters,
    combiners,
    stringCount,
    dcKw: round1(stringCount * stringPowerKw),
    acKw: inverters.reduce((s, i) => s + i.acRatingKw, 0),
  };
}

function round1(v: number): number {
  return Math.round(v * 10) / 10;
}
