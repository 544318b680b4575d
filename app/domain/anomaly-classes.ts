/**
 * Thermal anomaly classes for drone infrared findings. The names follow the trade's wording and
 * the abnormality patterns described in IEC TS 62446-3:2017 (not read in full: paywalled), where
 * it has a pattern; the severities and expected power effects below are Sunsift's DEFAULTS
 * (common practice, [P]) that an admin may change per organisation. They are not limits of the
 * technical specification, and no ΔT band here is an IEC value.
 */

export type Severity = "low" | "medium" | "high";
/** Power effect: `amount` strings, `amount` modules of the string, or none. */
export type EffectUnit = "string" | "module" | "none";

export interface AnomalyRule {
  severity: Severity;
  effectUnit: EffectUnit;
  effectAmount: number;
}

export interface AnomalyClass extends AnomalyRule {
  key: string;
  /** As written in a findings CSV (case-insensitive). */
  name: string;
  /** What a pilot sees in the image. */
  pattern: string;
  /** Whole-string or connector faults: check connectors, fuse and cable before modules. */
  checkConnectionsFirst: boolean;
  /** Why the default effect is what it is. */
  effectNote: string;
}

export const ANOMALY_CLASSES: readonly AnomalyClass[] = [
  {
    key: "cell_hot_spot",
    name: "cell hot spot",
    pattern: "one cell clearly warmer than the rest of the module",
    severity: "low",
    effectUnit: "module",
    effectAmount: 0.05,
    checkConnectionsFirst: false,
    effectNote: "a few percent of one module [P]",
  },
  {
    key: "several_hot_cells",
    name: "several hot cells",
    pattern: "several warm cells scattered over one module",
    severity: "medium",
    effectUnit: "module",
    effectAmount: 0.15,
    checkConnectionsFirst: false,
    effectNote: "part of one module [P]",
  },
  {
    key: "bypass_diode_substring",
    name: "bypass-diode substring",
    pattern: "one cell row (a third of the module) uniformly warmer: its bypass diode conducts",
    severity: "medium",
    effectUnit: "module",
    effectAmount: 1 / 3,
    checkConnectionsFirst: false,
    effectNote: "one of the three substrings of a module is bypassed [P]",
  },
  {
    key: "module_open_or_short",
    name: "module open or short",
    pattern: "a whole module uniformly warmer than its neighbours",
    severity: "high",
    effectUnit: "module",
    effectAmount: 1,
    checkConnectionsFirst: false,
    effectNote: "one module's output [P]",
  },
  {
    key: "string_offline",
    name: "string offline",
    pattern: "every module of the string uniformly warmer: the string carries no current",
    severity: "high",
    effectUnit: "string",
    effectAmount: 1,
    checkConnectionsFirst: true,
    effectNote: "one whole string [P]",
  },
  {
    key: "hot_connector",
    name: "hot connector or junction box",
    pattern: "a connector or junction box much hotter than its neighbours",
    severity: "high",
    effectUnit: "string",
    effectAmount: 1,
    checkConnectionsFirst: true,
    effectNote: "up to one string: a failing connector opens its string [P]",
  },
  {
    key: "broken_glass",
    name: "broken glass",
    pattern: "a crack pattern or shattered-glass mosaic of warm cells",
    severity: "high",
    effectUnit: "module",
    effectAmount: 0.3,
    checkConnectionsFirst: false,
    effectNote: "part of one module now; a safety matter (moisture, insulation) [P]",
  },
  {
    key: "soiling",
    name: "soiling",
    pattern: "even warming, often thicker along the lower module edge",
    severity: "low",
    effectUnit: "string",
    effectAmount: 0.03,
    checkConnectionsFirst: false,
    effectNote: "a few percent of the string [P]",
  },
  {
    key: "shading",
    name: "shading",
    pattern: "warm area that moves with the sun (poles, fences, neighbouring rows)",
    severity: "low",
    effectUnit: "string",
    effectAmount: 0.05,
    checkConnectionsFirst: false,
    effectNote: "a few percent of the string [P]",
  },
  {
    key: "vegetation",
    name: "vegetation",
    pattern: "plants over the lower modules, warm patches that follow them",
    severity: "medium",
    effectUnit: "string",
    effectAmount: 0.05,
    checkConnectionsFirst: false,
    effectNote: "a few percent of the string, growing [P]",
  },
];

const BY_KEY = new Map(ANOMALY_CLASSES.map((c) => [c.key, c]));
const BY_NAME = new Map(ANOMALY_CLASSES.map((c) => [c.name.toLowerCase(), c]));

export function anomalyClass(key: string): AnomalyClass | undefined {
  return BY_KEY.get(key);
}

/** A class by its name (case-insensitive, spaces squeezed) or its key. */
export function classByName(name: string): AnomalyClass | undefined {
  const n = name.trim().toLowerCase().replace(/\s+/g, " ");
  return BY_NAME.get(n) ?? BY_KEY.get(n.replace(/[\s-]+/g, "_"));
}

/** The rule in force: the organisation's override, else the default. */
export function effectiveRule(key: string, overrides: ReadonlyMap<string, AnomalyRule> | undefined): AnomalyRule {
  const o = overrides?.get(key);
  if (o) return o;
  const c = BY_KEY.get(key);
  if (!c) return { severity: "low", effectUnit: "none", effectAmount: 0 };
  return { severity: c.severity, effectUnit: c.effectUnit, effectAmount: c.effectAmount };
}

/** Expected effect in strings' worth of output: a module is 1 / modulesPerString of its string. */
export function effectInStrings(rule: AnomalyRule, modulesPerString: number): number {
  if (rule.effectUnit === "none") return 0;
  if (rule.effectUnit === "string") return rule.effectAmount;
  return modulesPerString > 0 ? Math.min(1, rule.effectAmount / modulesPerString) : 0;
}

export function describeEffect(rule: AnomalyRule): string {
  if (rule.effectUnit === "none") return "no expected power loss";
  const a = rule.effectAmount;
  const fmt = (x: number) => (Math.abs(x - 1 / 3) < 1e-9 ? "⅓" : String(Math.round(x * 1000) / 1000));
  if (rule.effectUnit === "string") return a === 1 ? "one string" : `${fmt(a)} of a string`;
  return a === 1 ? "one module" : `${fmt(a)} of a module`;
}

/**
 * ΔT bands (< 10 K, 10–20 K, > 20 K) are a convention of the trade [S], not of IEC TS 62446-3:
 * shown as a hint next to the class, never as its classification.
 */
export function deltaTBand(deltaTK: number | null | undefined): string | null {
  if (deltaTK == null || !Number.isFinite(deltaTK)) return null;
  if (deltaTK < 10) return "ΔT under 10 K";
  if (deltaTK <= 20) return "ΔT 10–20 K";
  return "ΔT over 20 K";
}
