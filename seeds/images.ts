/**
 * Drawn infrared-style images for the demo findings: a false-colour grid of modules (not a
 * photo) with the anomaly painted in and outlined, and a colour bar at the right. A tiny PNG
 * encoder (RGB, 8 bit, zlib from node) keeps the generator free of extra packages.
 */
import { deflateSync } from "node:zlib";
import type { Rng } from "./prng";

export const IMG_W = 320;
export const IMG_H = 256;

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

function crc32(buf: Uint8Array): number {
  let c = 0xffffffff;
  for (let i = 0; i < buf.length; i++) c = CRC_TABLE[(c ^ buf[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type: string, data: Uint8Array): Buffer {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, "ascii"), Buffer.from(data)]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td));
  return Buffer.concat([len, td, crc]);
}

/** Encode an RGB image (row-major, 3 bytes per pixel) as PNG. */
export function encodePng(width: number, height: number, rgb: Uint8Array): Buffer {
  const raw = Buffer.alloc((width * 3 + 1) * height);
  for (let y = 0; y < height; y++) {
    raw[y * (width * 3 + 1)] = 0; // filter: none
    raw.set(rgb.subarray(y * width * 3, (y + 1) * width * 3), y * (width * 3 + 1) + 1);
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 2; // colour type RGB
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk("IHDR", ihdr),
    chunk("IDAT", deflateSync(raw, { level: 6 })),
    chunk("IEND", new Uint8Array(0)),
  ]);
}

/** Iron-like false-colour scale (black → violet → magenta → orange → yellow → white). */
const STOPS: Array<[number, number, number, number]> = [
  [0, 0, 0, 0],
  [0.2, 40, 0, 130],
  [0.45, 180, 0, 150],
  [0.7, 250, 110, 0],
  [0.88, 255, 220, 40],
  [1, 255, 255, 255],
];

export function falseColour(f: number): [number, number, number] {
  const x = Math.min(1, Math.max(0, f));
  for (let i = 1; i < STOPS.length; i++) {
    const [x1, r1, g1, b1] = STOPS[i];
    if (x <= x1) {
      const [x0, r0, g0, b0] = STOPS[i - 1];
      const t = (x - x0) / (x1 - x0);
      return [Math.round(r0 + t * (r1 - r0)), Math.round(g0 + t * (g1 - g0)), Math.round(b0 + t * (b1 - b0))];
    }
  }
  return [255, 255, 255];
}

/** 256-step lookup table of the false-colour scale. */
const LUT = (() => {
  const t = new Uint8Array(256 * 3);
  for (let i = 0; i < 256; i++) t.set(falseColour(i / 255), i * 3);
  return t;
})();

export type ImageClass =
  | "cell hot spot"
  | "several hot cells"
  | "bypass-diode substring"
  | "module open or short"
  | "string offline"
  | "hot connector or junction box"
  | "broken glass"
  | "soiling"
  | "shading"
  | "vegetation";

const MOD_W = 30; // px per module (portrait, 1.134 m)
const MOD_H = 60; // px (2.279 m)
const COLS = 8;
const X0 = 12;
const Y0 = 60; // upper module row; the lower row (the finding's string) starts at Y0 + MOD_H + 2

/**
 * Draw one finding: two module rows of a table, the lower row being the string in question,
 * with the anomaly (ΔT in kelvin above the healthy modules) painted and outlined in white.
 */
export function drawFinding(cls: ImageClass, deltaT: number, rng: Rng): Buffer {
  const T = new Float32Array(IMG_W * IMG_H);
  for (let y = 0; y < IMG_H; y++) {
    const row = 27 + 1.5 * Math.sin(y / 41);
    for (let x = 0; x < IMG_W; x++) T[y * IMG_W + x] = row; // warm ground, °C
  }
  const base = 41;
  const cellW = MOD_W / 6; // 5 px
  const cellH = MOD_H / 12; // 5 px
  const rows = [Y0, Y0 + MOD_H + 2];
  const add = (x0: number, y0: number, w: number, h: number, dv: number) => {
    const xa = Math.max(0, Math.floor(x0));
    const xb = Math.min(IMG_W, Math.ceil(x0 + w));
    for (let y = Math.max(0, Math.floor(y0)); y < Math.min(IMG_H, y0 + h); y++) {
      const o = y * IMG_W;
      for (let x = xa; x < xb; x++) T[o + x] += dv;
    }
  };
  for (const ry of rows)
    for (let m = 0; m < COLS; m++) {
      const mx = X0 + m * (MOD_W + 2);
      for (let cy = 0; cy < 12; cy++)
        for (let cx = 0; cx < 6; cx++) {
          const v = base + rng.normal(0, 0.35);
          const x0 = mx + cx * cellW;
          const y0 = ry + cy * cellH;
          for (let y = y0; y < y0 + cellH - 1; y++) T.fill(v, y * IMG_W + x0, y * IMG_W + x0 + cellW - 1);
        }
    }
  const s = rows[1];
  const m0 = X0 + 4 * (MOD_W + 2);
  let box: [number, number, number, number];
  switch (cls) {
    case "string offline":
    case "module open or short":
      add(X0, s, COLS * (MOD_W + 2) - 2, MOD_H, deltaT);
      box = [X0 - 2, s - 2, COLS * (MOD_W + 2) + 2, MOD_H + 4];
      break;
    case "hot connector or junction box": {
      const cx = X0 + COLS * (MOD_W + 2) + 6;
      add(X0, s, COLS * (MOD_W + 2) - 2, MOD_H, Math.min(4, deltaT / 6)); // the string behind it is off
      add(cx - 3, s + MOD_H / 2 - 3, 7, 7, deltaT);
      add(cx - 5, s + MOD_H / 2 - 5, 11, 11, deltaT / 3);
      box = [cx - 9, s + MOD_H / 2 - 9, 19, 19];
      break;
    }
    case "cell hot spot":
      add(m0 + 2 * cellW, s + 5 * cellH, cellW - 1, cellH - 1, deltaT);
      box = [m0 + 2 * cellW - 4, s + 5 * cellH - 4, cellW + 7, cellH + 7];
      break;
    case "several hot cells":
      for (const [cx, cy] of [[1, 2], [4, 3], [2, 7], [3, 9]]) add(m0 + cx * cellW, s + cy * cellH, cellW - 1, cellH - 1, deltaT * (0.7 + 0.3 * rng.next()));
      box = [m0 - 3, s - 3, MOD_W + 6, MOD_H + 6];
      break;
    case "bypass-diode substring":
      add(m0 + 2 * cellW, s, 2 * cellW - 1, MOD_H - 1, deltaT);
      box = [m0 + 2 * cellW - 3, s - 3, 2 * cellW + 5, MOD_H + 6];
      break;
    case "soiling":
    case "shading":
    case "vegetation":
    case "broken glass":
      for (let m = 0; m < COLS; m++) add(X0 + m * (MOD_W + 2), s + MOD_H - 2 * cellH, MOD_W - 1, 2 * cellH - 1, deltaT * (0.6 + 0.4 * rng.next()));
      box = [X0 - 2, s + MOD_H - 2 * cellH - 3, COLS * (MOD_W + 2) + 2, 2 * cellH + 6];
      break;
  }
  // colour scale from the ground to the hottest anomaly
  const tLo = base - 14;
  const tHi = base + Math.max(8, deltaT) + 2;
  const rgb = new Uint8Array(IMG_W * IMG_H * 3);
  for (let i = 0; i < T.length; i++) {
    const k = Math.min(255, Math.max(0, Math.round((255 * (T[i] - tLo)) / (tHi - tLo)))) * 3;
    rgb[i * 3] = LUT[k];
    rgb[i * 3 + 1] = LUT[k + 1];
    rgb[i * 3 + 2] = LUT[k + 2];
  }
  const px = (x: number, y: number, c: [number, number, number]) => {
    if (x < 0 || x >= IMG_W || y < 0 || y >= IMG_H) return;
    rgb.set(c, (y * IMG_W + x) * 3);
  };
  const [bx, by, bw, bh] = box.map(Math.round) as [number, number, number, number];
  for (let x = bx; x <= bx + bw; x++) {
    px(x, by, [255, 255, 255]);
    px(x, by + bh, [255, 255, 255]);
  }
  for (let y = by; y <= by + bh; y++) {
    px(bx, y, [255, 255, 255]);
    px(bx + bw, y, [255, 255, 255]);
  }
  // colour bar
  for (let y = 20; y < IMG_H - 20; y++) {
    const c = falseColour(1 - (y - 20) / (IMG_H - 40));
    for (let x = IMG_W - 14; x < IMG_W - 6; x++) px(x, y, c);
  }
  return encodePng(IMG_W, IMG_H, rgb);
}
