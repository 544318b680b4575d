import Papa from "papaparse";
import { detectDelimiter, stripBom } from "./file-checks";
import { createLineCounter } from "./csv-lines";

/**
 * Parses and checks a plant layout CSV, one row per string:
 * `block,inverter,combiner,string,modules[,x,y]` (x, y in metres). All-or-nothing: the layout is
 * the reference every reading hangs on, so any error refuses the file, each error naming its line.
 */

export interface LayoutRow {
  line: number;
  block: string;
  inverter: string;
  combiner: string;
  string: string;
  modules: number;
  x: number | null;
  y: number | null;
}

export interface LayoutCombiner {
  name: string;
  block: string;
  inverter: string;
  strings: number;
  modules: number;
}

export interface LayoutTotals {
  blocks: number;
  inverters: number;
  combiners: number;
  strings: number;
  modules: number;
}

export interface LayoutError {
  line: number;
  reason: string;
}

export type LayoutResult =
  | { ok: true; rows: LayoutRow[]; combiners: LayoutCombiner[]; totals: LayoutTotals; warnings: LayoutError[] }
  | { ok: false; errors: LayoutError[]; errorCount: number };

export interface ExistingLayout {
  /** Combiners that already have readings, with their current string count. */
  combinersWithHistory: Map<string, number>;
}

const REQUIRED = ["block", "inverter", "combiner", "string", "modules"] as const;
const ALIASES: Record<string, string> = {
  string_id: "string", string_name: "string", modules_per_string: "modules", module_count: "modules",
};
const MAX_ERRORS = 200;
const MAX_MODULES_PER_STRING = 200;
const MAX_NAME = 64;
const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

function fail(errors: LayoutError[], total = errors.length): LayoutResult {
  return { ok: false, errors: errors.slice(0, MAX_ERRORS), errorCount: total };
}

export function parseLayoutCsv(input: string, existing?: ExistingLayout): LayoutResult {
  const text = stripBom(input);
  if (text.trim() === "") return fail([{ line: 1, reason: "The file is empty." }]);
  const parsed = Papa.parse<string[]>(text, { delimiter: detectDelimiter(text), skipEmptyLines: false });
  const counter = createLineCounter();
  const lines = parsed.data.map((r) => counter.lineOf(r));
  const header = parsed.data[0].map((h) => {
    const k = h.trim().toLowerCase().replace(/\s+/g, "_");
    return ALIASES[k] ?? k;
  });
  const col = (name: string) => header.indexOf(name);
  const missing = REQUIRED.filter((c) => col(c) < 0);
  if (missing.length)
    return fail([{ line: 1, reason: `Missing column${missing.length > 1 ? "s" : ""}: ${missing.join(", ")}. Expected the header block,inverter,combiner,string,modules (x,y optional).` }]);
  const dupHeader = header.find((h, i) => h !== "" && header.indexOf(h) !== i);
  if (dupHeader) return fail([{ line: 1, reason: `Column "${dupHeader}" appears twice in the header.` }]);

  const errors: LayoutError[] = [];
  const rows: LayoutRow[] = [];
  const stringAt = new Map<string, number>();
  const combinerAt = new Map<string, { inverter: string; block: string; line: number }>();
  const inverterAt = new Map<string, { block: string; line: number }>();
  const [cx, cy] = [col("x"), col("y")];

  for (let r = 1; r < parsed.data.length; r++) {
    const f = parsed.data[r];
    const line = lines[r];
    if (f.length === 1 && f[0].trim() === "") continue;
    const err = (reason: string) => errors.push({ line, reason });
    if (f.length !== header.length) {
      err(`Expected ${header.length} fields as in the header, found ${f.length}${f.length < header.length ? ": the line looks truncated" : ""}.`);
      continue;
    }
    const [block, inverter, combiner, string] = (["block", "inverter", "combiner", "string"] as const).map((c) => f[col(c)].trim());
    const names = { block, inverter, combiner, string };
    const empty = Object.entries(names).filter(([, v]) => v === "").map(([k]) => k);
    if (empty.length) {
      err(`Empty ${empty.join(", ")}.`);
      continue;
    }
    const long = Object.entries(names).find(([, v]) => v.length > MAX_NAME);
    if (long) err(`The ${long[0]} name is longer than ${MAX_NAME} characters.`);
    // Names reach spreadsheets (exports) and references like "B1-I1-C01/7" (findings): no formula
    // starts, no folder separators.
    const formula = Object.entries(names).find(([, v]) => /^[=+\-@]/.test(v));
    if (formula) err(`The ${formula[0]} name "${formula[1].slice(0, 40)}" starts with ${formula[1][0]}, which spreadsheets run as a formula; device names start with a letter or digit.`);
    const pathy = Object.entries(names).find(([, v]) => /[\\/\u0000]/.test(v));
    if (pathy) err(`The ${pathy[0]} name "${pathy[1].slice(0, 40)}" holds a slash or backslash; device names cannot (findings name strings as combiner/string).`);
    const modulesText = f[col("modules")].trim();
    const modules = /^\d+$/.test(modulesText) ? Number(modulesText) : NaN;
    if (Number.isNaN(modules)) err(`Module count "${modulesText}" is not a whole number.`);
    else if (modules < 1 || modules > MAX_MODULES_PER_STRING) err(`Module count ${modules} is outside 1–${MAX_MODULES_PER_STRING}.`);
    const coord = (c: number, name: string): number | null => {
      const v = c >= 0 ? f[c].trim() : "";
      if (v === "") return null;
      if (!NUMBER.test(v)) {
        err(`${name} "${v}" is not a number of metres.`);
        return null;
      }
      return Number(v);
    };
    const x = coord(cx, "x");
    const y = coord(cy, "y");

    // Production data names devices, not paths: an inverter or combiner name must mean one thing.
    const inv = inverterAt.get(inverter);
    if (inv && inv.block !== block) err(`Inverter ${inverter} is already in block ${inv.block} (line ${inv.line}); inverter names must be unique in the site.`);
    else if (!inv) inverterAt.set(inverter, { block, line });
    const cmb = combinerAt.get(combiner);
    if (cmb && (cmb.inverter !== inverter || cmb.block !== block))
      err(`Combiner ${combiner} is already under inverter ${cmb.inverter} in block ${cmb.block} (line ${cmb.line}); combiner names must be unique in the site.`);
    else if (!cmb) combinerAt.set(combiner, { inverter, block, line });
    const key = `${combiner}\u0000${string}`;
    const first = stringAt.get(key);
    if (first !== undefined) err(`Duplicate string: ${string} of combiner ${combiner} is already on line ${first}.`);
    else stringAt.set(key, line);
    rows.push({ line, block, inverter, combiner, string, modules, x, y });
  }

  if (!errors.length && rows.length === 0)
    return fail([{ line: 1, reason: "The file has a header but no string rows." }]);

  const combiners = new Map<string, LayoutCombiner>();
  for (const r of rows) {
    const c = combiners.get(r.combiner) ?? { name: r.combiner, block: r.block, inverter: r.inverter, strings: 0, modules: 0 };
    c.strings++;
    c.modules += Number.isNaN(r.modules) ? 0 : r.modules;
    combiners.set(r.combiner, c);
  }
  for (const [name, c] of combiners) {
    if (inverterAt.has(name)) errors.push({ line: combinerAt.get(name)!.line, reason: `Combiner ${name} has the same name as an inverter (line ${inverterAt.get(name)!.line}); device names must be unique.` });
    const before = existing?.combinersWithHistory.get(name);
    if (before !== undefined && before !== c.strings)
      errors.push({
        line: combinerAt.get(name)!.line,
        reason: `Combiner ${name} has production history with ${before} strings; this file gives it ${c.strings}. Its past and new readings would no longer compare: keep ${before} strings, or give the rewired combiner a new name.`,
      });
  }
  if (errors.length) return fail(errors.sort((a, b) => a.line - b.line));

  const warnings: LayoutError[] = [];
  for (const [name] of existing?.combinersWithHistory ?? [])
    if (!combiners.has(name)) warnings.push({ line: 0, reason: `Combiner ${name} has production history but is not in this file; its history is kept.` });

  return {
    ok: true,
    rows,
    combiners: [...combiners.values()],
    totals: {
      blocks: new Set(rows.map((r) => r.block)).size,
      inverters: inverterAt.size,
      combiners: combiners.size,
      strings: rows.length,
      modules: rows.reduce((sum, r) => sum + r.modules, 0),
    },
    warnings,
  };
}

/** The confirmation value (a form field, an API query) that lets a re-import delete the drone findings on the strings it removes. */
export const CONFIRM_DROP = "drop-findings";
