import { describe, expect, it } from "vitest";
import {
  blockLevelLosses,
  classifyLoss,
  dailyAggregate,
  dayLossClasses,
  deficitStrings,
  evaluateFlag,
  flagHistory,
  type HistoryDay,
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
  it("a day's classes: block-level, data quality, clipping and strings out side by side", () => {
    // Our product rule (DESIGN.md, loss classes and flag rule), not an outside check: flagged below a
    // modified z of −3.5 (the outlier bound of the NIST/SEMATECH e-Handbook §1.3.5.17, Iglewicz and
    // Hoaglin 1993) with at least half a string out; data quality or clipping over half the day's
    // daytime intervals explain the day.
    const row = (combinerId: number, blockId: number, oi: number, extra: Partial<Parameters<typeof dayLossClasses>[0][number]> = {}) => ({
      combinerId, blockId, oi, total: 100, excluded: {}, robustZ: 0, stringsOut: 0, ...extra,
    });
    const classes = dayLossClasses([
      ...[1, 2, 3, 4, 5].map((i) => row(i, 1, 1.0)),
      row(6, 1, 0.917, { robustZ: -6, stringsOut: 1.0 }), // one string out of 12 in a healthy block
      row(7, 1, 1.0, { excluded: { stale: 30, gap: 25 } }), // 55 % of the day unusable
      row(8, 1, 1.0, { excluded: { clipping: 60 } }),
      row(9, 1, 1.0, { robustZ: -4, stringsOut: 0.4 }), // low, but less than half a string
      ...[10, 11, 12, 13, 14].map((i) => row(i, 2, 0.93, { robustZ: -5, stringsOut: 0.8 })), // the whole block low
    ]);
    expect(classes).toEqual([
      "none", "none", "none", "none", "none", "strings_out", "data_quality", "clipping", "none",
      "block_level", "block_level", "block_level", "block_level", "block_level",
    ]);
  });
});

describe("flag history: sliding N-of-M over valid days", () => {
  // rule: DESIGN "flag rule" (3 of 5, −3.5, half a string) [P]; skipping invalid days is our choice [P]
  const h = (i: number, rz: number | null, lost: number | null = 40, lossClass: string | null = null): HistoryDay => ({
    day: `2024-06-${String(i).padStart(2, "0")}`,
    robustZ: rz,
    oi: rz != null && rz < -3.5 ? 0.917 : 1,
    peerMedianOi: 1,
    nStrings: 12,
    lossClass,
    lostKwh: lost,
  });
  it("first day is the start of the deficit, across cloudy days; lost to date sums the run", () => {
    const days = [h(1, 0.2, 0), h(2, -6), h(3, null, 10), h(4, -6), h(5, null, 5, "data_quality"), h(6, -6), h(7, -6)];
    const runs = flagHistory(days);
    expect(runs).toHaveLength(1);
    expect(runs[0]!.firstDay).toBe("2024-06-02");
    expect(runs[0]!.lastLowDay).toBe("2024-06-07");
    expect(runs[0]!.closedOn).toBeNull();
    // days 2–7 except none normal: 40 + 10 + 40 + 5 + 40 + 40
    expect(runs[0]!.lostKwhToDate).toBe(175);
  });
  it("closes after M valid days back within the peers, invalid days not counting; a later deficit is a new flag", () => {
    const days = [h(1, -6), h(2, -6), h(3, -6), h(4, 0), h(5, 0), h(6, null), h(7, 0), h(8, 0), h(9, -1), h(10, -6), h(11, -6), h(12, -6)];
    const runs = flagHistory(days);
    expect(runs.map((r) => [r.firstDay, r.lastLowDay, r.closedOn])).toEqual([
      ["2024-06-01", "2024-06-03", "2024-06-09"],
      ["2024-06-10", "2024-06-12", null],
    ]);
  });
  it("never fires on block-level days unless the peers share the block; nor on clipping or bad data", () => {
    const bl = [1, 2, 3, 4, 5].map((i) => h(i, -6, 40, "block_level"));
    expect(flagHistory(bl)).toHaveLength(0);
    expect(flagHistory(bl, { peersWithinBlock: true })).toHaveLength(1);
    expect(flagHistory([1, 2, 3, 4, 5].map((i) => h(i, -6, 40, "clipping")))).toHaveLength(0);
  });
});
