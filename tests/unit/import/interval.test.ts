import { describe, expect, it } from "vitest";
import { detectInterval, toIntervalStart } from "~/domain/import/interval";

const t0 = Date.UTC(2026, 5, 1, 6, 0);
const series = (stepMin: number, n: number) => Array.from({ length: n }, (_, i) => t0 + i * stepMin * 60_000);

describe("detectInterval", () => {
  it.each([1, 5, 10, 15])("finds %i-minute data", (m) => {
    expect(detectInterval(series(m, 50))).toMatchObject({ ok: true, seconds: m * 60, share: 1 });
  });
  it("ignores order, repeats per device and gaps", () => {
    const s = series(5, 40).filter((_, i) => i % 7 !== 3);
    const shuffled = [...s, ...s, ...s].reverse();
    const r = detectInterval(shuffled);
    expect(r).toMatchObject({ ok: true, seconds: 300 });
    expect(r.ok && r.share).toBeLessThan(1);
  });
  it("explains unsupported or undecidable samples", () => {
    expect(detectInterval(series(30, 10))).toEqual({
      ok: false,
      reason: "The most common step between timestamps is 30 min; supported intervals are 1, 5, 10 and 15 minutes.",
    });
    expect(detectInterval([t0, t0 + 1000, t0 + 2000])).toMatchObject({ ok: false, reason: expect.stringContaining("1 s") });
    expect(detectInterval([t0, t0])).toEqual({ ok: false, reason: "Need at least 3 distinct timestamps to detect the interval; the sample has 1." });
  });
});

describe("toIntervalStart", () => {
  it("moves interval-end labels back one interval", () => {
    expect(toIntervalStart(t0, "end", 900)).toBe(t0 - 900_000);
    expect(toIntervalStart(t0, "start", 900)).toBe(t0);
  });
});
