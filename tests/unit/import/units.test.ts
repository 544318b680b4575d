import { describe, expect, it } from "vitest";
import { detectUnit, toCanonical } from "~/domain/import/units";

describe("detectUnit", () => {
  it.each([
    ["B1-I1-C01 Current [A]", "A"],
    ["B1-I1-C01 Idc (mA)", "mA"],
    ["INV 1.2 AC Power (kW)", "kW"],
    ["INV 1.2 P_AC KW", "kW"],
    ["Block 3 export MW", "MW"],
    ["MET1_POA_Wm2", "W/m2"],
    ["Plane irradiance W/m²", "W/m2"],
    ["GHI [W/m^2]", "W/m2"],
    ["Irr. (W / m2)", "W/m2"],
    ["Module Temp degF", "degF"],
    ["Back-of-module temperature °C", "degC"],
    ["Tamb (deg C)", "degC"],
    ["Air temp ºC", "degC"],
    ["Ambient [C]", "degC"],
    ["Wind speed km/h", "km/h"],
    ["WS_kmh", "km/h"],
    ["Anemometer (m/s)", "m/s"],
    ["Wind mph", "mph"],
    ["B1-I1 Vdc", "V"],
    ["DC bus voltage (kV)", "kV"],
    ["Daily yield kWh", "kWh"],
  ])("%s → %s", (header, unit) => {
    expect(detectUnit(header)).toBe(unit);
  });

  it.each(["Status", "String A current", "Comms OK", "Timestamp", "Alarm code"])("finds no unit in %s", (header) => {
    expect(detectUnit(header)).toBeNull();
  });
});

describe("toCanonical", () => {
  it("converts temperatures to °C", () => {
    expect(toCanonical(212, "degF")).toBe(100);
    expect(toCanonical(32, "degF")).toBe(0);
    expect(toCanonical(-40, "degF")).toBe(-40);
    expect(toCanonical(98.6, "degF")).toBeCloseTo(37, 10);
    expect(toCanonical(298.15, "K")).toBeCloseTo(25, 10);
  });
  it("converts power to W", () => {
    expect(toCanonical(2.5, "kW")).toBe(2500);
    expect(toCanonical(1.2, "MW")).toBeCloseTo(1_200_000, 6);
    expect(toCanonical(900, "W")).toBe(900);
  });
  it("converts current and voltage", () => {
    expect(toCanonical(1500, "mA")).toBe(1.5);
    expect(toCanonical(1.2, "kA")).toBe(1200);
    expect(toCanonical(1.1, "kV")).toBeCloseTo(1100, 9);
  });
  it("converts speeds to m/s", () => {
    expect(toCanonical(36, "km/h")).toBe(10);
    expect(toCanonical(10, "mph")).toBeCloseTo(4.4704, 10);
    expect(toCanonical(1, "kn")).toBeCloseTo(0.514444, 5);
  });
  it("converts irradiance to W/m²", () => {
    expect(toCanonical(0.95, "kW/m2")).toBeCloseTo(950, 9);
  });
});
