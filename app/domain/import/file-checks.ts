/**
 * Checks that run on raw bytes or raw text before any CSV parsing, so that a binary file, a
 * wrong encoding or a runaway line is refused before the parser buffers it.
 */

/** How many leading bytes `detectFileProblems` looks at. */
export const SNIFF_BYTES = 1024;

/**
 * Why the file cannot be read as text, or null when it can. Pass the first bytes of the file
 * (at least SNIFF_BYTES when the file is that long; more are ignored).
 */
export function detectFileProblems(firstBytes: Uint8Array): string | null {
  const b = firstBytes.subarray(0, SNIFF_BYTES);
  if (b.length === 0) return "The file is empty.";
  if (b[0] === 0x50 && b[1] === 0x4b && b[2] === 0x03 && b[3] === 0x04)
    return "The file is a ZIP archive (an .xlsx workbook is one), not CSV text: export the sheet as CSV.";
  if (b[0] === 0x1f && b[1] === 0x8b) return "The file is gzip-compressed, not CSV text: decompress it first.";
  const kind = binaryKind(b);
  if (kind) return `The file is ${kind}, not CSV text: choose the exported CSV file.`;
  if ((b[0] === 0xff && b[1] === 0xfe) || (b[0] === 0xfe && b[1] === 0xff))
    return "The file is UTF-16 text: save or export it as UTF-8 CSV.";
  const nul = b.indexOf(0);
  if (nul >= 0) return `The file is not text: it contains a NUL byte at byte ${nul + 1}.`;
  const bad = firstInvalidUtf8(b);
  if (bad >= 0)
    return `The file is not valid UTF-8 (byte 0x${b[bad].toString(16).toUpperCase().padStart(2, "0")} at byte ${bad + 1}): export it as UTF-8; it may be Latin-1 or Windows-1252.`;
  const start = hasUtf8Bom(b) ? 3 : 0;
  if (b.subarray(start).every((x) => x === 0x20 || x === 0x09 || x === 0x0a || x === 0x0d))
    return "The file is empty.";
  return null;
}

/** Common binary files by their first bytes (magic numbers, from each format's specification). */
function binaryKind(b: Uint8Array): string | null {
  const starts = (...xs: number[]) => xs.every((x, i) => b[i] === x);
  if (starts(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a)) return "a PNG image";
  if (starts(0xff, 0xd8, 0xff)) return "a JPEG image";
  if (starts(0x25, 0x50, 0x44, 0x46, 0x2d)) return "a PDF document";
  if (starts(0x47, 0x49, 0x46, 0x38)) return "a GIF image";
  if (starts(0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1)) return "an old Excel (.xls) or Office file";
  return null;
}

export function hasUtf8Bom(b: Uint8Array): boolean {
  return b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf;
}

/**
 * Index of the first byte that breaks UTF-8, or −1. A sequence cut off by the end of the
 * buffer is not an error: the sample is only the start of the file.
 */
export function firstInvalidUtf8(b: Uint8Array): number {
  let i = 0;
  while (i < b.length) {
    const x = b[i];
    let need: number;
    let min: number;
    if (x < 0x80) {
      i++;
      continue;
    } else if (x >= 0xc2 && x <= 0xdf) {
      need = 1;
      min = 0x80;
    } else if (x >= 0xe0 && x <= 0xef) {
      need = 2;
      min = 0x800;
    } else if (x >= 0xf0 && x <= 0xf4) {
      need = 3;
      min = 0x10000;
    } else return i;
    let cp = x & (0x3f >> need);
    for (let k = 1; k <= need; k++) {
      if (i + k >= b.length) return -1;
      const c = b[i + k];
      if ((c & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (c & 0x3f);
    }
    // Overlong forms, UTF-16 surrogates and code points past U+10FFFF are invalid UTF-8.
    if (cp < min || (cp >= 0xd800 && cp <= 0xdfff) || cp > 0x10ffff) return i;
    i += need + 1;
  }
  return -1;
}

export function stripBom(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

export type Delimiter = "," | ";" | "\t" | "|";

const CANDIDATES: Delimiter[] = [",", ";", "\t", "|"];

/** Counts a delimiter outside double quotes on one line. */
function countOutsideQuotes(line: string, d: string): number {
  let n = 0;
  let quoted = false;
  for (const ch of line) {
    if (ch === '"') quoted = !quoted;
    else if (ch === d && !quoted) n++;
  }
  return n;
}

/**
 * The field delimiter of a CSV sample: the candidate found the same (non-zero) number of times
 * on the most lines, the header included. Comma wins ties, since a semicolon file with decimal
 * commas still has consistent semicolons while the reverse is rarely true.
 */
export function detectDelimiter(sampleText: string): Delimiter {
  const lines = stripBom(sampleText)
    .split(/\r\n|\n|\r/)
    .slice(0, 50)
    .filter((l) => l.trim() !== "");
  // The sample may end in the middle of a line.
  if (lines.length > 2) lines.pop();
  let best: Delimiter = ",";
  let bestScore = 0;
  for (const d of CANDIDATES) {
    const headerCount = lines.length ? countOutsideQuotes(lines[0], d) : 0;
    if (headerCount === 0) continue;
    const agreeing = lines.filter((l) => countOutsideQuotes(l, d) === headerCount).length;
    const score = agreeing * 1000 + headerCount;
    if (score > bestScore) {
      best = d;
      bestScore = score;
    }
  }
  return best;
}

/** Name of a delimiter for messages. */
export function delimiterName(d: Delimiter): string {
  return { ",": "comma", ";": "semicolon", "\t": "tab", "|": "pipe" }[d];
}

export interface OverlongLine {
  line: number;
  reason: string;
}

/**
 * Watches raw text chunks (before the CSV parser) for a line longer than `maxLineLength`
 * characters. Memory is constant: only the current line's length is kept. Lines are counted
 * physically (a newline inside quotes counts), like a text editor would.
 */
export function createLineLengthGuard(maxLineLength: number) {
  let line = 1;
  let length = 0;
  let lastWasCr = false;
  let lineFeeds = 0;
  return {
    /** Returns the first overlong line, or null; call for every chunk in order. */
    push(chunk: string): OverlongLine | null {
      // Jumps from line break to line break (indexOf runs natively), not character by character.
      const n = chunk.length;
      let lf = chunk.indexOf("\n");
      let cr = chunk.indexOf("\r");
      let i = 0;
      for (;;) {
        if (lf !== -1 && lf < i) lf = chunk.indexOf("\n", i);
        if (cr !== -1 && cr < i) cr = chunk.indexOf("\r", i);
        const br = lf === -1 ? cr : cr === -1 ? lf : Math.min(lf, cr);
        const run = (br === -1 ? n : br) - i;
        if (run > 0) {
          lastWasCr = false;
          length += run;
          if (length > maxLineLength)
            return { line, reason: `Line ${line} is longer than ${maxLineLength.toLocaleString("en")} characters; the file is refused.` };
        }
        if (br === -1) return null;
        const isLf = br === lf;
        if (isLf) lineFeeds++;
        if (!(isLf && lastWasCr)) line++;
        length = 0;
        lastWasCr = !isLf;
        i = br + 1;
      }
    },
    /** Line feeds (LF) seen so far, for callers that number lines by LF only. */
    get lineFeeds(): number {
      return lineFeeds;
    },
  };
}
