import { describe, expect, it } from "vitest";
import { addDays, daysBetween, formatLocalIso, localToUtc, zoneOffsetMinutes } from "../../../seeds/time";

describe("site-zone time helpers of the generator (EU rule: clocks change at 01:00 UTC on the last Sunday of March and October [C])", () => {
  it("formats local time with its offset", () => {
    expect(formatLocalIso(Date.UTC(2026, 6, 1, 10, 0), "Europe/Madrid")).toBe("2026-07-01T12:00:00+02:00");
    expect(formatLocalIso(Date.UTC(2026, 11, 1, 10, 0), "Europe/Madrid")).toBe("2026-12-01T11:00:00+01:00");
    expect(formatLocalIso(Date.UTC(2018, 9, 14, 6, 0), "America/Denver")).toBe("2018-10-14T00:00:00-06:00");
  });
  it("labels the repeated hour of 2026-10-25 with two offsets", () => {
    expect(formatLocalIso(Date.UTC(2026, 9, 25, 0, 5), "Europe/Madrid")).toBe("2026-10-25T02:05:00+02:00");
    expect(formatLocalIso(Date.UTC(2026, 9, 25, 1, 5), "Europe/Madrid")).toBe("2026-10-25T02:05:00+01:00");
    expect(zoneOffsetMinutes(Date.UTC(2026, 9, 25, 0, 59), "Europe/Madrid")).toBe(120);
    expect(zoneOffsetMinutes(Date.UTC(2026, 9, 25, 1, 0), "Europe/Madrid")).toBe(60);
  });
  it("finds local midnight and the first occurrence of a repeated wall time", () => {
    expect(localToUtc("2026-10-25", "Europe/Madrid")).toBe(Date.UTC(2026, 9, 24, 22, 0));
    expect(localToUtc("2026-10-26", "Europe/Madrid")).toBe(Date.UTC(2026, 9, 25, 23, 0));
    expect(localToUtc("2026-10-25", "Europe/Madrid", 2, 30)).toBe(Date.UTC(2026, 9, 25, 0, 30));
    expect(localToUtc("2026-03-30", "Europe/Madrid", 12, 0)).toBe(Date.UTC(2026, 2, 30, 10, 0));
  });
  it("calendar arithmetic", () => {
    expect(addDays("2026-11-30", -59)).toBe("2026-10-02");
    expect(daysBetween("2026-10-02", "2026-11-30")).toBe(59);
  });
});
