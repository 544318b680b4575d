/**
 * Sunsift's own colour scale for a combiner's output relative to its peers: a sequential
 * light-blue → amber → dark-brown ramp (monotone in lightness, so it reads in greyscale and for
 * red/green colour-blind people), grey for no data. Each bin also has a word, never colour alone.
 */
export const OI_BINS = [
  { min: 0.99, color: "#9cc9e8", label: "≥ 99 % of peers", word: "on par" },
  { min: 0.96, color: "#e9c46a", label: "96–99 %", word: "slightly low" },
  { min: 0.9, color: "#d98c1f", label: "90–96 %", word: "low: about a string" },
  { min: 0.75, color: "#8a4b0f", label: "75–90 %", word: "very low" },
  { min: -Infinity, color: "#2b1a0b", label: "< 75 %", word: "most strings out" },
] as const;

export const NO_DATA_COLOR = "#c9ced2";

export function oiColor(ratio: number | null | undefined): string {
  if (ratio == null || !Number.isFinite(ratio)) return NO_DATA_COLOR;
  return OI_BINS.find((b) => ratio >= b.min)!.color;
}

export function oiWord(ratio: number | null | undefined): string {
  if (ratio == null || !Number.isFinite(ratio)) return "no data";
  return OI_BINS.find((b) => ratio >= b.min)!.word;
}
