import { CANONICAL_UNIT, METRICS_BY_KIND, METRIC_QUANTITY, type Device, type DeviceKind, type Metric, type Quantity } from "./metrics";
import { detectUnit, unitQuantity, type Unit } from "./units";

/**
 * Guesses, from one wide-format header, which device and metric the column holds. A guess only:
 * the engineer reviews every column before the import runs.
 */

export interface ColumnGuess {
  device: string | null;
  metric: Metric | null;
  unit: Unit | null;
  /** Why a part is missing or was assumed, for the review screen. */
  note?: string;
}

/** Lower-case words, separators dropped; letters and digits of one word stay together. */
function words(text: string): string[] {
  return text.toLowerCase().split(/[^a-z0-9°/]+/).filter(Boolean);
}

/** Lower-case tokens with letters and digits split apart and leading zeros dropped: "INV01" → inv 1. */
function idTokens(text: string): string[] {
  return (text.toLowerCase().match(/[a-z]+|\d+/g) ?? []).map((t) => (/^\d+$/.test(t) ? String(Number(t)) : t));
}

function containsRun(hay: string[], needle: string[]): boolean {
  outer: for (let i = 0; i + needle.length <= hay.length; i++) {
    for (let k = 0; k < needle.length; k++) if (hay[i + k] !== needle[k]) continue outer;
    return true;
  }
  return false;
}

const KIND_WORDS: Record<DeviceKind, RegExp> = {
  inverter: /^(inv|inverter|pcs|wr)$/,
  combiner: /^(cb|scb|combiner|cmb|jb|dcb|sb)$/,
  met: /^(met|ws|weather|station|wst|meteo)$/,
};

const KIND_RANK: Record<DeviceKind, number> = { combiner: 3, inverter: 2, met: 1 };

export interface DeviceIndex {
  byTokens: { device: Device; tokens: string[]; numbers: string }[];
  met: Device[];
}

export function indexDevices(devices: Device[]): DeviceIndex {
  return {
    byTokens: devices.map((device) => {
      const tokens = idTokens(device.name);
      return { device, tokens, numbers: tokens.filter((t) => /^\d/.test(t)).join(".") };
    }),
    met: devices.filter((d) => d.kind === "met"),
  };
}

/**
 * The device a header names: the longest device name found in it (so `B1-I1-C01` beats its
 * inverter `B1-I1`), else the single device of the hinted kind whose numbers are the header's
 * numbers (`INV 1.2` → `B1-I2`).
 */
export function findDevice(header: string, index: DeviceIndex, unit: Unit | null): { device: Device; byNumbers: boolean } | null {
  const spaced = header.replace(/_/g, " ");
  const unitFree = unit ? spaced.replace(/[[(][^\])]*[\])]/g, " ").replace(/\b(w\/?m2|wm-2|km\/h|m\/s)\b/gi, " ") : spaced;
  const tokens = idTokens(unitFree);
  // Several names can be found ("INV01 CB01 Current", or "B1-I1-C01", which holds its inverter
  // "B1-I1"): the most specific kind wins, then the longest name.
  let best: { device: Device; rank: number } | null = null;
  for (const d of index.byTokens) {
    const rank = KIND_RANK[d.device.kind] * 1000 + d.tokens.length;
    if (d.tokens.length && containsRun(tokens, d.tokens) && (!best || rank > best.rank)) best = { device: d.device, rank };
  }
  if (best) return { device: best.device, byNumbers: false };
  const kinds = (Object.keys(KIND_WORDS) as DeviceKind[]).filter((k) => tokens.some((t) => KIND_WORDS[k].test(t)));
  const numbers = tokens.filter((t) => /^\d/.test(t)).join(".");
  if (kinds.length !== 1 || numbers === "") return null;
  const hits = index.byTokens.filter((d) => d.device.kind === kinds[0] && d.numbers === numbers);
  return hits.length === 1 ? { device: hits[0].device, byNumbers: true } : null;
}

const has = (ws: string[], re: RegExp) => ws.some((w) => re.test(w));

function quantityFromWords(ws: string[]): Quantity | null {
  if (has(ws, /^(poa|gti|ghi|irradiance|irr|irrad|insolation|pyranometer|pyr|radiation|rad)$/)) return "irradiance";
  if (has(ws, /^(temp|temperature|tmod|tamb|tmp)$/)) return "temperature";
  if (has(ws, /^(wind|wspd|windspeed)$/)) return "speed";
  if (has(ws, /^(current|curr|idc|iac|i|amps|amperage)$/)) return "current";
  if (has(ws, /^(voltage|volt|vdc|vac|u|udc|v)$/)) return "voltage";
  if (has(ws, /^(power|pac|pdc|p|pwr|kw|mw)$/)) return "power";
  return null;
}

/** Metric from the header's words, the unit's quantity and the device kind. */
function inferMetric(ws: string[], quantity: Quantity | null, kind: DeviceKind | null): { metric: Metric | null; note?: string } {
  const ac = has(ws, /^(ac|pac|iac|vac|active|grid)$/);
  const dc = has(ws, /^(dc|pdc|idc|vdc|udc)$/);
  switch (quantity) {
    case "irradiance":
      if (has(ws, /^(ghi|horizontal|horiz|ghr)$/)) return { metric: "ghi" };
      if (has(ws, /^(poa|gti|tilted|plane|tilt)$/)) return { metric: "poa_irradiance" };
      return { metric: "poa_irradiance", note: "irradiance without POA/GHI in the header: assumed plane-of-array" };
    case "temperature":
      if (has(ws, /^(mod|module|panel|back|bom|cell|tmod|pv|bkpanel)$/)) return { metric: "module_temperature" };
      if (has(ws, /^(amb|ambient|air|outdoor|outside|tamb)$/)) return { metric: "ambient_temperature" };
      return { metric: null, note: "a temperature, but the header says neither module nor ambient" };
    case "speed":
      return { metric: "wind_speed" };
    case "current":
    case "voltage":
      if (ac && !dc) return { metric: null, note: `AC ${quantity} is not stored` };
      return { metric: quantity === "current" ? "dc_current" : "dc_voltage" };
    case "power":
      if (dc && !ac) return { metric: "dc_power" };
      if (ac || kind === "inverter") return { metric: "ac_power" };
      if (kind === "combiner") return { metric: "dc_power" };
      return { metric: null, note: "power, but the header says neither AC nor DC" };
    default:
      return { metric: null, note: "no metric recognised in the header" };
  }
}

export function guessColumn(header: string, index: DeviceIndex): ColumnGuess {
  const unit = detectUnit(header);
  if (unit && unitQuantity(unit) === "energy")
    return { device: null, metric: null, unit, note: `energy (${unit}) is not imported: Sunsift stores power` };
  const found = findDevice(header, index, unit);
  const ws = words(header);
  const quantity = unit ? (unitQuantity(unit) as Quantity) : quantityFromWords(ws);
  const { metric, note } = inferMetric(ws, quantity, found?.device.kind ?? null);
  const notes: string[] = note ? [note] : [];
  let device = found?.device ?? null;
  if (found?.byNumbers) notes.push(`device matched by its numbers to ${found.device.name}`);
  // Weather columns often name no station; a site with one station leaves no doubt.
  if (!device && metric && METRICS_BY_KIND.met.includes(metric) && index.met.length === 1) {
    device = index.met[0];
    notes.push(`no station in the header: assumed ${device.name}, the site's only weather station`);
  }
  if (!device) notes.push("no device of the layout found in the header");
  if (device && metric && !METRICS_BY_KIND[device.kind].includes(metric))
    notes.push(`${metric} is not a metric of a ${device.kind}`);
  if (metric && unit && METRIC_QUANTITY[metric] !== unitQuantity(unit)) notes.push(`unit ${unit} does not fit ${metric}`);
  if (metric && !unit) notes.push(`no unit in the header: assumed ${CANONICAL_UNIT[metric]}`);
  return { device: device?.name ?? null, metric, unit, ...(notes.length ? { note: notes.join("; ") } : {}) };
}
