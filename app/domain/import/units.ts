import type { Quantity } from "./metrics";

/**
 * Units found in SCADA headers and how to bring them to Sunsift's canonical units
 * (A, V, W, W/m², °C, m/s). Unit codes are plain strings so that a saved mapping stays JSON.
 */

interface UnitDef {
  quantity: Quantity | "energy";
  /** canonical = toBase(value) */
  toBase: (v: number) => number;
}

const scale = (k: number) => (v: number) => v * k;

const UNITS = {
  A: { quantity: "current", toBase: scale(1) },
  mA: { quantity: "current", toBase: scale(1e-3) },
  kA: { quantity: "current", toBase: scale(1e3) },
  V: { quantity: "voltage", toBase: scale(1) },
  mV: { quantity: "voltage", toBase: scale(1e-3) },
  kV: { quantity: "voltage", toBase: scale(1e3) },
  W: { quantity: "power", toBase: scale(1) },
  kW: { quantity: "power", toBase: scale(1e3) },
  MW: { quantity: "power", toBase: scale(1e6) },
  "W/m2": { quantity: "irradiance", toBase: scale(1) },
  "kW/m2": { quantity: "irradiance", toBase: scale(1e3) },
  degC: { quantity: "temperature", toBase: scale(1) },
  // Written as (v − 32) / 1.8 rather than v·5/9 − 160/9 so that 212 °F gives exactly 100 °C.
  degF: { quantity: "temperature", toBase: (v) => (v - 32) / 1.8 },
  K: { quantity: "temperature", toBase: (v) => v - 273.15 },
  "m/s": { quantity: "speed", toBase: scale(1) },
  "km/h": { quantity: "speed", toBase: (v) => v / 3.6 },
  mph: { quantity: "speed", toBase: scale(0.44704) },
  kn: { quantity: "speed", toBase: (v) => (v * 1852) / 3600 },
  // Energy columns are recognised only so the mapping can say why it ignores them.
  Wh: { quantity: "energy", toBase: scale(1) },
  kWh: { quantity: "energy", toBase: scale(1e3) },
  MWh: { quantity: "energy", toBase: scale(1e6) },
} satisfies Record<string, UnitDef>;

export type Unit = keyof typeof UNITS;

export const UNIT_CODES = Object.keys(UNITS) as Unit[];

export function isUnit(text: string): text is Unit {
  return Object.prototype.hasOwnProperty.call(UNITS, text);
}

export function unitQuantity(unit: Unit): Quantity | "energy" {
  return UNITS[unit].quantity;
}

/** Converts a value in `unit` to the canonical unit of its quantity. */
export function toCanonical(value: number, unit: Unit): number {
  return UNITS[unit].toBase(value);
}

// Spellings whose case matters (mA is not MA, MW is not mW) are matched exactly.
const EXACT: Record<string, Unit> = {
  A: "A", ADC: "A", Adc: "A", mA: "mA", kA: "kA",
  V: "V", mV: "mV", kV: "kV", KV: "kV",
  W: "W", kW: "kW", KW: "kW", MW: "MW",
  C: "degC", F: "degF", K: "K",
  Wh: "Wh", kWh: "kWh", KWh: "kWh", MWh: "MWh",
};

// Spellings that cannot be confused whatever their case.
const LOOSE: Record<string, Unit> = {
  amp: "A", amps: "A", ampere: "A", amperes: "A",
  volt: "V", volts: "V", vdc: "V",
  watt: "W", watts: "W", kwatt: "kW",
  "w/m2": "W/m2", wm2: "W/m2", "wm-2": "W/m2", "w.m-2": "W/m2", "w/sqm": "W/m2", "kw/m2": "kW/m2",
  "°c": "degC", degc: "degC", celsius: "degC",
  "°f": "degF", degf: "degF", fahrenheit: "degF", kelvin: "K",
  "m/s": "m/s", mps: "m/s", "ms-1": "m/s", "m.s-1": "m/s",
  "km/h": "km/h", kmh: "km/h", kph: "km/h", "km/hr": "km/h", kmph: "km/h",
  mph: "mph", kt: "kn", kts: "kn", knots: "kn", kn: "kn",
};

// Bare one-letter units (A, V, W, C, F, K) are trusted only in brackets or as the header's last
// word: "String A current" must not read as amperes.
const ONE_LETTER = /^[AVWCFK]$/;

function lookup(token: string, lastOrBracketed: boolean): Unit | null {
  const t = token.trim().replace(/^in\s+/i, "");
  if (t === "") return null;
  if (ONE_LETTER.test(t) && !lastOrBracketed) return null;
  return EXACT[t] ?? LOOSE[t.toLowerCase()] ?? null;
}

/** Spelling variants brought to one form before tokenising. */
function normaliseUnitText(header: string): string {
  return header
    .replace(/[²]/g, "2")
    .replace(/\^2/g, "2")
    .replace(/[º˚]/g, "°")
    .replace(/\bdeg\.?\s+([CF])\b/gi, "deg$1")
    .replace(/°\s+([CF])\b/gi, "°$1")
    .replace(/\s*\/\s*/g, "/");
}

/**
 * The unit written in a column header, or null when none is recognisable.
 * Looks first at the last bracketed part ("[A]", "(kW)"), then at words from the end.
 */
export function detectUnit(header: string): Unit | null {
  const text = normaliseUnitText(header);
  const brackets = [...text.matchAll(/[[(]([^\])[(]*)[\])]/g)];
  for (let i = brackets.length - 1; i >= 0; i--) {
    const unit = lookup(brackets[i][1], true);
    if (unit) return unit;
  }
  const words = text.replace(/[[\]()]/g, " ").split(/[\s_,;:|=]+/).filter(Boolean);
  for (let i = words.length - 1; i >= 0; i--) {
    const unit = lookup(words[i], i === words.length - 1);
    if (unit) return unit;
  }
  return null;
}
