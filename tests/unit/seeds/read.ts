/** Helpers for the seed tests: read a generated output directory back. */
import { createHash } from "node:crypto";
import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";

export interface Readings {
  header: string[];
  rows: string[][];
  col: (header: string) => number;
}

export function readReadings(dir: string): Readings {
  const files = readdirSync(dir).filter((f) => /^readings-\d{4}-\d{2}\.csv$/.test(f)).sort();
  let header: string[] = [];
  const rows: string[][] = [];
  for (const f of files) {
    const lines = readFileSync(join(dir, f), "utf8").trimEnd().split("\n");
    header = lines[0].split(",");
    for (const l of lines.slice(1)) rows.push(l.split(","));
  }
  const index = new Map(header.map((h, i) => [h, i]));
  return {
    header,
    rows,
    col: (h) => {
      const i = index.get(h);
      if (i === undefined) throw new Error(`no column ${h}`);
      return i;
    },
  };
}

export function readJson<T>(dir: string, name: string): T {
  return JSON.parse(readFileSync(join(dir, name), "utf8")) as T;
}

export function readCsv(dir: string, name: string): Array<Record<string, string>> {
  const lines = readFileSync(join(dir, name), "utf8").trimEnd().split("\n");
  const header = lines[0].split(",");
  return lines.slice(1).map((l) => {
    const cells: string[] = [];
    let cur = "";
    let q = false;
    for (let i = 0; i < l.length; i++) {
      const ch = l[i];
      if (q) {
        if (ch === '"' && l[i + 1] === '"') (cur += '"'), i++;
        else if (ch === '"') q = false;
        else cur += ch;
      } else if (ch === '"') q = true;
      else if (ch === ",") cells.push(cur), (cur = "");
      else cur += ch;
    }
    cells.push(cur);
    return Object.fromEntries(header.map((h, i) => [h, cells[i] ?? ""]));
  });
}

export function hashDir(dir: string, prefix = ""): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of readdirSync(join(dir, prefix), { withFileTypes: true })) {
    const rel = join(prefix, e.name);
    if (e.isDirectory()) Object.assign(out, hashDir(dir, rel));
    else out[rel] = createHash("sha256").update(readFileSync(join(dir, rel))).digest("hex");
  }
  return out;
}

export const median = (xs: number[]): number => {
  const s = [...xs].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};

/** Local date of an ISO label with offset: its first 10 characters. */
export const dateOf = (label: string) => label.slice(0, 10);
