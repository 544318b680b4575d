import type { Unit } from "./units";

/**
 * The metrics Sunsift stores, their canonical units, which device kinds carry them, and the
 * soft physical limits a converted value must respect.
 */

export const METRICS = [
  "dc_current",
  "dc_voltage",
  "dc_power",
  "ac_power",
  "poa_irradiance",
  "ghi",
  "module_temperature",
  "ambient_temperature",
  "wind_speed",
] as const;

export type Metric = (typeof METRICS)[number];

export type DeviceKind = "combiner" | "inverter" | "met";

export interface Device {
  name: string;
  kind: DeviceKind;
}

export type Quantity = "current" | "voltage" | "power" | "irradiance" | "temperature" | "speed";

export const METRIC_QUANTITY: Record<Metric, Quantity> = {
  dc_current: "current",
  dc_voltage: "voltage",
  dc_power: "power",
  ac_power: "power",
  poa_irradiance: "irradiance",
  ghi: "irradiance",
  module_temperature: "temperature",
  ambient_temperature: "temperature",
  wind_speed: "speed",
};

/** Canonical unit per metric: what the reading table stores. */
export const CANONICAL_UNIT: Record<Metric, Unit> = {
  dc_current: "A",
  dc_voltage: "V",
  dc_power: "W",
  ac_power: "W",
  poa_irradiance: "W/m2",
  ghi: "W/m2",
  module_temperature: "degC",
  ambient_temperature: "degC",
  wind_speed: "m/s",
};

/**
 * Which metrics a device kind may carry. Weather metrics live on met stations (a sensor bolted to
 * an inverter skid is declared as a station in site settings), electrical ones on equipment.
 */
export const METRICS_BY_KIND: Record<DeviceKind, readonly Metric[]> = {
  combiner: ["dc_current", "dc_voltage", "dc_power"],
  inverter: ["dc_current", "dc_voltage", "dc_power", "ac_power"],
  met: ["poa_irradiance", "ghi", "module_temperature", "ambient_temperature", "wind_speed"],
};

export function isMetric(text: string): text is Metric {
  return (METRICS as readonly string[]).includes(text);
}

export interface Limits {
  min: number;
  max: number;
}

/**
 * Soft sanity limits in canonical units. Wide enough for any real plant (1500 V systems,
 * multi-MW inverters, night-time sensor offsets of a few W/m² below zero), tight enough to catch
 * unit mistakes (kW read as W) and sensor garbage. A site may override them.
 */
export const DEFAULT_LIMITS: Record<Metric, Limits> = {
  dc_current: { min: -1, max: 10_000 },
  dc_voltage: { min: -10, max: 2_000 },
  dc_power: { min: -100_000, max: 50_000_000 },
  ac_power: { min: -100_000, max: 50_000_000 },
  poa_irradiance: { min: -20, max: 2_000 },
  ghi: { min: -20, max: 2_000 },
  module_temperature: { min: -50, max: 100 },
  ambient_temperature: { min: -60, max: 70 },
  wind_speed: { min: 0, max: 75 },
};

const UNIT_LABEL: Record<string, string> = { degC: "°C", degF: "°F", "W/m2": "W/m²", "kW/m2": "kW/m²" };

/** Human spelling of a unit code, for messages. */
export function unitLabel(unit: string): string {
  return UNIT_LABEL[unit] ?? unit;
}
