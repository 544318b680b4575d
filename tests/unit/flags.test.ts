import { describe, expect, it } from "vitest";
import {
  blockLevelLosses,
  classifyLoss,
  dailyAggregate,
  deficitStrings,
  evaluateFlag,
  LOSS_CLASS_LABEL,
  type CombinerDay,
  type DailyResult,
} from "~/domain/flags";

const day = (i: number, robustZ: number | null, oi: number | null = 0.917, n = 12): DailyResult => ({
  day: `2024-06-${String(i).padStart(2, "0")}`,
  robustZ,
  oi,
  peerMedianOi: 1,
  nStrings: n,
});

describe("flag rule: robust z < −3.5 on ≥ 3 of the last 5 days and ≥ half a string", () => {
  // threshold −3.5: Iglewicz & Hoaglin (1993) via NIST/SEMATECH e-Handbook §1.3.5.17 [C];
  // 3-of-5 persistence and the half-string minimum are product defaults [P]
  it("3 low days of 5 with one string out → flagged", () => {
    const d = evaluateFlag([day(1, -5), day(2, -1), day(3, -6), day(4, null), day(5, -4.2)]);
    expect(d.flagged).toBe(true);
    expect(d.lowDays).toBe(3);
    expect(d.deficitStrings).toBeCloseTo(0.996, 6);
    expect(d.firstLowDay).toBe("2024-06-01");
    expect(d.lastLowDay).toBe("2024-06-05");
  });
  it("2 of 5 is not enough; only the last 5 days count", () => {
    expect(evaluateFlag([day(1, -5), day(2, -1), day(3, -6), day(4, -1), day(5, -1)]).flagged).toBe(false);
    const older = [day(1, -9), day(2, -9), day(3, -9), day(4, -1), day(5, -1), day(6, -1), day(7, -4), day(8, -4)];
    expect(evaluateFlag(older).lowDays).toBe(2);
    expect(evaluateFlag(older).flagged).toBe(false);
  });
  it("exactly at the threshold is not low", () => {
    expect(evaluateFlag([day(1, -3.5), day(2, -3.5), day(3, -3.5)]).lowDays).toBe(0);
  });
  it("a statistically clear but tiny deficit (< half a string) is not flagged", () => {
    // 24 strings at 0.985 of peers = 0.36 string [X]
    const d = evaluateFlag([day(1, -5, 0.985, 24), day(2, -5, 0.985, 24), day(3, -5, 0.985, 24)]);
    expect(d.deficitStrings).toBeCloseTo(0.36, 6);
    expect(d.flagged).toBe(false);
  });
  it("custom N of M", () => {
    const days = [day(1, -5), day(2, -5), day(3, 0)];
    expect(evaluateFlag(days, { minLowDays: 2, windowDays: 3 }).flagged).toBe(true);
  });
});

describe("daily aggregate", () => {
  it("median of the valid interval scores", () => {
    expect(dailyAggregate([-4, null, -6, -5, Number.NaN])).toBe(-5);
    expect(dailyAggregate([null, undefined])).toBeNull();
  });
  it("deficit in strings", () => {
    expect(deficitStrings(day(1, -5, 0.75, 8))).toBeCloseTo(2, 12);
    expect(deficitStrings(day(1, -5, null))).toBeNull();
  });
});

describe("block-level loss vs strings out", () => {
  const mk = (block: string, ois: number[]): CombinerDay[] => ois.map((oi, i) => ({ combinerId: `${block}-${i}`, blockId: block, oi }));
  it("a block low together (soiling or shading) is found; one low combiner in a healthy block is not", () => {
    // soiling lowers output uniformly across a surface [P]
    const today = [
      ...mk("A", [1.0, 0.99, 1.01, 1.0, 0.917]),
      ...mk("B", [0.93, 0.94, 0.92, 0.93, 0.95]),
      ...mk("C", [1.0, 1.01, 0.99, 1.0, 1.0]),
    ];
    expect([...blockLevelLosses(today)]).toEqual(["B"]);
  });
  it("needs two blocks and enough combiners", () => {
    expect(blockLevelLosses(mk("A", [0.5, 0.5, 0.5])).size).toBe(0);
    expect(blockLevelLosses([...mk("A", [0.5, 0.5]), ...mk("B", [1, 1, 1])]).size).toBe(0);
  });
  it("classification precedence", () => {
    expect(classifyLoss({ flagged: true, dataQualityShare: 0.8 })).toBe("data_quality");
    expect(classifyLoss({ flagged: true, clippingShare: 0.7 })).toBe("clipping");
    expect(classifyLoss({ flagged: true, blockLevel: true })).toBe("block_level");
    expect(classifyLoss({ flagged: true, dataQualityShare: 0.1 })).toBe("strings_out");
    expect(classifyLoss({ flagged: false })).toBe("none");
    expect(LOSS_CLASS_LABEL.block_level).toBe("block-level loss: soiling or shading");
  });
});
