/**
 * Camera geometry for IR flights (nadir view, pinhole model): ground sample distance,
 * image footprint, the highest altitude that keeps enough pixels on a cell, and the number
 * of parallel passes to cover a block.
 */

/** GSD in metres per pixel = altitude × pixel pitch ÷ focal length. */
export function gsdM(altitudeM: number, pixelPitchUm: number, focalLengthMm: number): number {
  return (altitudeM * pixelPitchUm * 1e-6) / (focalLengthMm * 1e-3);
}

/** Ground footprint of one image, metres. */
export function footprintM(
  altitudeM: number,
  pixelPitchUm: number,
  focalLengthMm: number,
  widthPx: number,
  heightPx: number,
): { widthM: number; heightM: number } {
  const g = gsdM(altitudeM, pixelPitchUm, focalLengthMm);
  return { widthM: g * widthPx, heightM: g * heightPx };
}

/**
 * Highest altitude (m) at which a cell of `cellSizeM` still spans `minPixels` pixels
 * (≥ 5×5 px per cell is the usual IR requirement, IEC TS 62446-3 as summarised).
 */
export function maxAltitudeForCell(cellSizeM: number, pixelPitchUm: number, focalLengthMm: number, minPixels = 5): number {
  return ((cellSizeM / minPixels) * (focalLengthMm * 1e-3)) / (pixelPitchUm * 1e-6);
}

/**
 * Parallel passes to cover a block `blockWidthM` wide with swaths `swathM` wide overlapping
 * by `sideOverlap` (fraction): n passes cover s + (n − 1)·s·(1 − overlap).
 */
export function passesToCover(blockWidthM: number, swathM: number, sideOverlap = 0.2): number {
  if (!(swathM > 0) || sideOverlap < 0 || sideOverlap >= 1) throw new RangeError("swath must be > 0 and overlap in [0, 1)");
  if (blockWidthM <= swathM) return 1;
  return 1 + Math.ceil((blockWidthM - swathM) / (swathM * (1 - sideOverlap)) - 1e-9);
}
