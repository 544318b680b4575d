import { describe, expect, it } from "vitest";
import { recovery } from "~/domain/recovery";

describe("recovery", () => {
  it("one string of 12 back: 0.917 → 1.000 of peers", () => {
    // by hand [X]: ΔOI 0.083; 12·0.083 = 0.996 → 1 string; 0.083·100 kWh = 8.3 kWh/day;
    // ×365 = 3029.5 kWh; at 50 per MWh = 151.475 per year
    const r = recovery({
      before: [0.92, 0.917, null, 0.915, 0.917, 0.917, 0.918],
      after: [1.0, 1.0, 0.999, null, 1.001, 1.0, 0.5],
      nStrings: 12,
      expectedDailyKwh: 100,
      tariffPerMwh: 50,
    });
    expect(r.beforeOi).toBeCloseTo(0.917, 12);
    expect(r.afterOi).toBeCloseTo(1.0, 12);
    expect(r.recoveredStrings).toBe(1);
    expect(r.recoveredKwhPerDay).toBeCloseTo(8.3, 9);
    expect(r.annualKwh).toBeCloseTo(3029.5, 6);
    expect(r.annualValue).toBeCloseTo(151.475, 6);
    expect(r.complete).toBe(true);
  });
  it("uses the last N before and the first N after", () => {
    // the 0.5 day after the window must not count; nor the old 0.5 before it
    const r = recovery({ before: [0.5, 0.9, 0.9, 0.9], after: [1, 1, 1, 0.5], nStrings: 10, expectedDailyKwh: 50, tariffPerMwh: 40, days: 3 });
    expect(r.beforeOi).toBeCloseTo(0.9, 12);
    expect(r.afterOi).toBeCloseTo(1, 12);
    expect(r.recoveredStrings).toBe(1);
  });
  it("not enough data", () => {
    const r = recovery({ before: [null], after: [1, 1], nStrings: 10, expectedDailyKwh: 50, tariffPerMwh: 40 });
    expect(r.deltaOi).toBeNull();
    expect(r.complete).toBe(false);
    expect(recovery({ before: [0.9], after: [1], nStrings: 10, expectedDailyKwh: 50, tariffPerMwh: 40 }).complete).toBe(false);
  });
});
