import { describe, expect, it } from "vitest";
import { mad, maxAbsZ, mean, median, modifiedZScores, peerScore, zScores } from "~/domain/outliers";

const V = [1.0, 0.99, 1.01, 1.02, 0.98, 1.0, 0.8];

describe("modified z-score (Iglewicz & Hoaglin 1993)", () => {
  it("worked vector: median 1.00, MAD 0.01, only 0.80 beyond 3.5", () => {
    // NIST/SEMATECH e-Handbook §1.3.5.17 formula; vector computed by hand [X]
    expect(median(V)).toBeCloseTo(1.0, 12);
    expect(mad(V)).toBeCloseTo(0.01, 12);
    const m = modifiedZScores(V);
    const want = [0, -0.6745, 0.6745, 1.349, -1.349, 0, -13.49];
    m.forEach((x, i) => expect(x).toBeCloseTo(want[i], 6));
    expect(m.map((x) => Math.abs(x!) > 3.5)).toEqual([false, false, false, false, false, false, true]);
  });
  it("MAD = 0: skip gives nulls; meanad uses 1.253314 × mean absolute deviation", () => {
    // MAD = 0 substitution (IBM SPSS convention, σ ≈ 1.253314·MeanAD) [M]; by hand [X]:
    // [5,5,5,5,6,9], median 5, MeanAD 5/6 → M(9) = 4/(1.253314·0.83333) = 3.82985
    const w = [5, 5, 5, 5, 6, 9];
    expect(mad(w)).toBe(0);
    expect(modifiedZScores(w)).toEqual([null, null, null, null, null, null]);
    const m = modifiedZScores(w, { madZero: "meanad" });
    expect(m[5]).toBeCloseTo(3.82985, 4);
    expect(m[0]).toBe(0);
    expect(modifiedZScores([2, 2, 2], { madZero: "meanad" })).toEqual([null, null, null]);
  });
});

describe("classical z-score", () => {
  it("z of 0.80 is −2.2354 and bounded by 6/√7 at n = 7", () => {
    // NIST/SEMATECH e-Handbook §1.3.5.17; bound (n−1)/√n (Shiffler 1988) [X]
    const z = zScores(V);
    expect(mean(V)).toBeCloseTo(0.971429, 6);
    expect(z[6]).toBeCloseTo(-2.2354, 4);
    expect(maxAbsZ(7)).toBeCloseTo(2.2678, 4);
    // a |z| > 3 rule never fires at n = 7, even for an extreme outlier
    const extreme = [1, 1.01, 0.99, 1, 1.02, 0.98, -50];
    const ze = zScores(extreme);
    expect(Math.abs(ze[6]!)).toBeLessThan(maxAbsZ(7));
    expect(Math.abs(ze[6]!)).toBeGreaterThan(2.26);
  });
  it("null when the spread is zero or n < 2", () => {
    expect(zScores([3, 3, 3])).toEqual([null, null, null]);
    expect(zScores([3])).toEqual([null]);
  });
});

describe("peerScore", () => {
  it("includes the member in its group", () => {
    const s = peerScore(0.8, V.slice(0, 6));
    expect(s.n).toBe(7);
    expect(s.z).toBeCloseTo(-2.2354, 4);
    expect(s.robustZ).toBeCloseTo(-13.49, 6);
    expect(s.median).toBeCloseTo(1.0, 12);
  });
  it("a healthy member scores near zero", () => {
    const s = peerScore(1.0, [0.99, 1.01, 1.02, 0.98, 1.0, 0.8]);
    expect(Math.abs(s.robustZ!)).toBeLessThan(0.01);
  });
});
