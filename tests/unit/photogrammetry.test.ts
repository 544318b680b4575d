import { describe, expect, it } from "vitest";
import { footprintM, gsdM, maxAltitudeForCell, passesToCover } from "~/domain/photogrammetry";

describe("photogrammetry (pinhole camera, nadir)", () => {
  it("GSD: 17 µm pitch, 13 mm lens, 40 m → 5.23 cm/px", () => {
    // GSD = H·p/f, pinhole similar triangles [X]: 40·17e-6/13e-3 = 0.052308 m
    expect(gsdM(40, 17, 13) * 100).toBeCloseTo(5.23, 2);
  });
  it("footprint of a 640×512 sensor at 40 m", () => {
    // [X]: 0.052308·640 = 33.477 m, ·512 = 26.782 m
    const f = footprintM(40, 17, 13, 640, 512);
    expect(f.widthM).toBeCloseTo(33.477, 3);
    expect(f.heightM).toBeCloseTo(26.782, 3);
  });
  it("max altitude for ≥ 5×5 px on a 156 mm cell", () => {
    // ≥ 5×5 IR pixels per cell, IEC TS 62446-3 as summarised [S]; [X]: 0.0312·13e-3/17e-6 = 23.859 m
    const h = maxAltitudeForCell(0.156, 17, 13);
    expect(h).toBeCloseTo(23.859, 3);
    expect((0.156 / gsdM(h, 17, 13))).toBeCloseTo(5, 9);
  });
  it("passes to cover a 200 m block with 33.48 m swaths at 20 % side overlap", () => {
    // [X]: 7 passes cover 33.48 + 6·26.78 = 194.2 m < 200; 8 passes cover 221.0 m
    expect(passesToCover(200, 33.477, 0.2)).toBe(8);
    expect(passesToCover(30, 33.477, 0.2)).toBe(1);
    expect(passesToCover(33.477 + 26.7816, 33.477, 0.2)).toBe(2);
    expect(() => passesToCover(100, 10, 1)).toThrow(RangeError);
  });
});
