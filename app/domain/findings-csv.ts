/**
 * Findings CSV of one flight: `string,class,delta_t_k,image,notes`, where `string` is
 * `<combiner>/<string number>`, or columns `x,y` (metres on the layout grid) resolve to the
 * nearest string within a tolerance. All-or-nothing: any error refuses the file, each error
 * naming its line.
 */
import Papa from "papaparse";
import { classByName } from "./anomaly-classes";

export interface LayoutString {
  id: number;
  combinerId: number;
  combinerName: string;
  number: number;
  modules: number;
  x: number | null;
  y: number | null;
}

export interface ParsedFinding {
  line: number;
  stringId: number;
  combinerId: number;
  combinerName: string;
  stringNumber: number;
  modules: number;
  classKey: string;
  deltaTK: number | null;
  image: string | null;
  notes: string | null;
  /** Distance to the resolved string when placed by x,y. */
  distanceM: number | null;
}

export interface LineError {
  line: number;
  reason: string;
}

export type FindingsParse = { ok: true; rows: ParsedFinding[] } | { ok: false; errors: LineError[]; errorCount: number };

export const DEFAULT_TOLERANCE_M = 5;
const MAX_ERRORS = 200;
const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/** A spatial index over string positions: a grid of cells the size of the tolerance. */
export function createNearestString(strings: readonly LayoutString[], toleranceM = DEFAULT_TOLERANCE_M) {
  const cell = Math.max(toleranceM, 1e-6);
  const grid = new Map<string, LayoutString[]>();
  for (const s of strings) {
    if (s.x == null || s.y == null) continue;
    const k = `${Math.floor(s.x / cell)},${Math.floor(s.y / cell)}`;
    const list = grid.get(k);
    if (list) list.push(s);
    else grid.set(k, [s]);
  }
  return (x: number, y: number): { string: LayoutString; distanceM: number } | { string: null; distanceM: number | null } => {
    const cx = Math.floor(x / cell);
    const cy = Math.floor(y / cell);
    let best: LayoutString | null = null;
    let bestD = Infinity;
    for (let dx = -1; dx <= 1; dx++)
      for (let dy = -1; dy <= 1; dy++)
        for (const s of grid.get(`${cx + dx},${cy + dy}`) ?? []) {
          const d = Math.hypot(s.x! - x, s.y! - y);
          if (d < bestD || (d === bestD && best && s.id < best.id)) {
            best = s;
            bestD = d;
          }
        }
    if (best && bestD <= toleranceM) return { string: best, distanceM: bestD };
    return { string: null, distanceM: Number.isFinite(bestD) ? bestD : null };
  };
}

function normHeader(h: string): string {
  return h.replace(/^\uFEFF/, "").trim().toLowerCase().replace(/[\s-]+/g, "_");
}

const HEADER_ALIASES: Record<string, string> = { delta_t: "delta_t_k", dt_k: "delta_t_k", deltat_k: "delta_t_k", anomaly: "class", note: "notes", combiner_string: "string" };

export function parseFindingsCsv(text: string, strings: readonly LayoutString[], opts: { toleranceM?: number } = {}): FindingsParse {
  const tolerance = opts.toleranceM ?? DEFAULT_TOLERANCE_M;
  const errors: LineError[] = [];
  let errorCount = 0;
  const err = (line: number, reason: string) => {
    errorCount++;
    if (errors.length < MAX_ERRORS) errors.push({ line, reason });
  };
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ""), { skipEmptyLines: "greedy" });
  const rows = parsed.data;
  if (!rows.length) return { ok: false, errors: [{ line: 1, reason: "the file is empty" }], errorCount: 1 };
  const header = rows[0]!.map(normHeader).map((h) => HEADER_ALIASES[h] ?? h);
  const col = (name: string) => header.indexOf(name);
  const iString = col("string");
  const iX = col("x");
  const iY = col("y");
  const iClass = col("class");
  const iDt = col("delta_t_k");
  const iImage = col("image");
  const iNotes = col("notes");
  if (iClass < 0) err(1, "the header has no `class` column");
  if (iString < 0 && (iX < 0 || iY < 0)) err(1, "the header needs a `string` column (<combiner>/<string number>) or `x` and `y` columns");
  if (errorCount) return { ok: false, errors, errorCount };
  if (rows.length === 1) return { ok: false, errors: [{ line: 2, reason: "the file has a header but no findings" }], errorCount: 1 };

  const byName = new Map<string, LayoutString>();
  for (const s of strings) byName.set(`${s.combinerName.toLowerCase()}/${s.number}`, s);
  const nearest = iX >= 0 && iY >= 0 ? createNearestString(strings, tolerance) : null;
  const out: ParsedFinding[] = [];
  // Papaparse has no line numbers; with quoted newlines a record spans several lines, so count them.
  let line = 1 + (rows[0]!.join(",").match(/\n/g)?.length ?? 0);
  for (let r = 1; r < rows.length; r++) {
    const cells = rows[r]!;
    line += 1;
    const thisLine = line;
    line += cells.join(",").match(/\n/g)?.length ?? 0;
    const get = (i: number) => (i >= 0 ? (cells[i] ?? "").trim() : "");
    let target: LayoutString | null = null;
    let distanceM: number | null = null;
    const ref = get(iString);
    if (ref) {
      const m = /^(.+?)\s*\/\s*(\d+)$/.exec(ref);
      if (!m) {
        err(thisLine, `string "${ref}" must be written <combiner>/<string number>, e.g. B1-I2-C04/7`);
        continue;
      }
      target = byName.get(`${m[1]!.toLowerCase()}/${Number(m[2])}`) ?? null;
      if (!target) {
        const combinerKnown = strings.some((s) => s.combinerName.toLowerCase() === m[1]!.toLowerCase());
        err(thisLine, combinerKnown ? `combiner ${m[1]} has no string ${Number(m[2])}` : `no combiner named "${m[1]}" in this site's layout`);
        continue;
      }
    } else if (nearest) {
      const xs = get(iX);
      const ys = get(iY);
      if (!NUMBER.test(xs) || !NUMBER.test(ys)) {
        err(thisLine, xs || ys ? `x,y "${xs},${ys}" must be numbers in metres` : "no string and no x,y position");
        continue;
      }
      const hit = nearest(Number(xs), Number(ys));
      if (!hit.string) {
        err(
          thisLine,
          hit.distanceM == null
            ? `no string within ${tolerance} m of (${xs}, ${ys})`
            : `the nearest string is ${hit.distanceM.toFixed(1)} m from (${xs}, ${ys}), beyond the ${tolerance} m tolerance`,
        );
        continue;
      }
      target = hit.string;
      distanceM = hit.distanceM;
    } else {
      err(thisLine, "no string given");
      continue;
    }
    const clsText = get(iClass);
    const cls = classByName(clsText);
    if (!cls) {
      err(thisLine, clsText ? `unknown class "${clsText}"` : "the class is empty");
      continue;
    }
    const dtText = get(iDt);
    let deltaTK: number | null = null;
    if (dtText) {
      if (!NUMBER.test(dtText) || Number(dtText) < -50 || Number(dtText) > 200) {
        err(thisLine, `delta_t_k "${dtText}" must be a temperature difference in kelvin (−50…200)`);
        continue;
      }
      deltaTK = Number(dtText);
    }
    const image = get(iImage);
    if (image.length > 200 || /[\\/]/.test(image)) {
      err(thisLine, `image "${image.slice(0, 40)}" must be a file name without folders`);
      continue;
    }
    const notes = get(iNotes);
    out.push({
      line: thisLine,
      stringId: target.id,
      combinerId: target.combinerId,
      combinerName: target.combinerName,
      stringNumber: target.number,
      modules: target.modules,
      classKey: cls.key,
      deltaTK,
      image: image || null,
      notes: notes ? notes.slice(0, 2000) : null,
      distanceM,
    });
  }
  if (errorCount) return { ok: false, errors, errorCount };
  return { ok: true, rows: out };
}
