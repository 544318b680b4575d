import { describe, expect, it } from "vitest";
import { clearSkyPoa, clearSkyPoaAveraged } from "~/domain/clearsky";
import { flightWindows } from "~/domain/flight-window";
import { solarNoonUtc } from "~/domain/sun";

const tucson = { lat: 32.22969, lon: -110.95534, mounting: { kind: "fixed" as const, tilt: 25, azimuth: 180 } };
const dayStart = new Date(Date.UTC(2018, 9, 18, 7)); // local midnight, UTC−7
const dayEnd = new Date(Date.UTC(2018, 9, 19, 7));

describe("flightWindows", () => {
  it("one window around solar noon on a clear October day in Tucson", () => {
    // ≥ 600 W/m² POA for IR, IEC TS 62446-3 as summarised [M]; clear-sky model Haurwitz + Erbs [S]
    const w = flightWindows(dayStart, dayEnd, tucson);
    expect(w).toHaveLength(1);
    const noon = solarNoonUtc(new Date(Date.UTC(2018, 9, 18)), tucson.lon).getTime();
    expect(w[0].start.getTime()).toBeLessThan(noon);
    expect(w[0].end.getTime()).toBeGreaterThan(noon);
    // the peak sits within a quarter hour of solar noon for an equator-facing plane [P]
    expect(Math.abs(w[0].peakAt.getTime() - noon)).toBeLessThan(15 * 60_000);
    // the edges are where the modelled POA crosses 600
    expect(clearSkyPoa(w[0].start, tucson).poa).toBeGreaterThanOrEqual(600);
    expect(clearSkyPoa(new Date(w[0].start.getTime() - 5 * 60_000), tucson).poa).toBeLessThan(600);
    const hours = (w[0].end.getTime() - w[0].start.getTime()) / 3_600_000;
    expect(hours).toBeGreaterThan(4);
    expect(hours).toBeLessThan(9);
  });
  it("no window when the threshold is out of reach or at night", () => {
    expect(flightWindows(dayStart, dayEnd, tucson, { minPoa: 1300 })).toEqual([]);
    expect(flightWindows(dayStart, new Date(Date.UTC(2018, 9, 18, 12)), tucson)).toEqual([]);
  });
});

describe("clearSkyPoaAveraged", () => {
  it("an hour straddling sunrise averages in the dark minutes", () => {
    // rdtools issue #243: average sub-interval clear-sky values instead of the label instant [S]
    const start = new Date(Date.UTC(2018, 9, 18, 13, 30)); // ~06:30 MST, sunrise ≈ 06:27
    const avg = clearSkyPoaAveraged(start, 60, tucson).poa;
    const atEnd = clearSkyPoa(new Date(start.getTime() + 3_600_000), tucson).poa;
    expect(avg).toBeGreaterThan(0);
    expect(avg).toBeLessThan(atEnd);
  });
  it("over one minute it equals the value at the minute's midpoint", () => {
    const start = new Date(Date.UTC(2018, 9, 18, 19, 0));
    expect(clearSkyPoaAveraged(start, 1, tucson).poa).toBeCloseTo(clearSkyPoa(new Date(start.getTime() + 30_000), tucson).poa, 9);
  });
});
