import { describe, expect, it } from "vitest";
import { recovery } from "~/domain/recovery";
import { estimateStringsOut, lostEnergyKwh } from "~/domain/strings-out";
import {
  actorsFor,
  allowedTransitions,
  dueStatus,
  expectedDailyKwh,
  findTransition,
  formatNumber,
  isCleanDay,
  recoveryVerdict,
  whatToCheck,
  type RecoveryDay,
} from "~/domain/work-orders";

describe("work-order state machine", () => {
  const lead = { roles: ["lead"] as const, userId: "L" };
  const tech = { roles: ["technician"] as const, userId: "T" };
  const otherTech = { roles: ["technician"] as const, userId: "X" };

  it("managers plan, the assignee works", () => {
    expect(actorsFor({ ...lead, roles: [...lead.roles] }, { assigneeId: "T" })).toEqual(["manager"]);
    expect(actorsFor({ ...tech, roles: [...tech.roles] }, { assigneeId: "T" })).toEqual(["assignee"]);
    expect(actorsFor({ ...otherTech, roles: [...otherTech.roles] }, { assigneeId: "T" })).toEqual([]);
    expect(actorsFor({ roles: ["owner"], userId: "T" }, { assigneeId: "T" })).toEqual([]);
    expect(actorsFor({ roles: ["lead"], userId: "L" }, { assigneeId: "L" })).toEqual(["manager", "assignee"]);
  });

  it("allows exactly the moves of the diagram", () => {
    expect(allowedTransitions("open", ["manager"]).map((t) => t.to).sort()).toEqual(["assigned", "cancelled"]);
    expect(allowedTransitions("open", ["assignee"])).toEqual([]);
    expect(allowedTransitions("assigned", ["assignee"]).map((t) => t.to).sort()).toEqual(["done", "in progress"]);
    expect(allowedTransitions("in progress", ["assignee"]).map((t) => t.to).sort()).toEqual(["assigned", "done"]);
    expect(allowedTransitions("done", ["manager", "assignee"])).toEqual([]);
    expect(allowedTransitions("cancelled", ["manager"]).map((t) => t.to)).toEqual(["open"]);
    expect(findTransition("assigned", "cancelled", ["assignee"])).toBeNull();
    expect(findTransition("in progress", "cancelled", ["manager"])?.action).toBe("cancel");
    expect(findTransition("open", "done", ["manager"])).toBeNull();
  });

  it("numbers and due status", () => {
    expect(formatNumber(1)).toBe("WO-0001");
    expect(dueStatus("2026-11-09", "2026-11-10", "assigned")).toBe("overdue");
    expect(dueStatus("2026-11-11", "2026-11-10", "assigned")).toBe("due soon");
    expect(dueStatus("2026-11-20", "2026-11-10", "open")).toBe("later");
    expect(dueStatus("2026-11-09", "2026-11-10", "done")).toBeNull();
  });

  it("prefills what to check: connector, fuse and cable first for a whole string", () => {
    expect(whatToCheck({ combiner: "B2-I3-C05", strings: [7] })).toBe(
      "Check connectors, fuse and cable of string 7 on combiner B2-I3-C05. Measure the string current before and after.",
    );
    expect(whatToCheck({ combiner: "B1-I4-C09", strings: [4, 3] })).toContain("strings 3 and 4 on combiner B1-I4-C09");
    expect(whatToCheck({ combiner: "C1", strings: [2], anomaly: "several hot cells" })).toContain("several hot cells");
    expect(whatToCheck({ combiner: null, strings: [], block: "B2" })).toBe("Inspect block B2.");
  });
});

describe("recovery arithmetic", () => {
  it("worked vector: N 24, i0 9.5 A, I 199.5 A at G 1000, Tc 25 → r 0.875, k̂ 3, ΔE 5.70 kWh", () => {
    // Source: computed from the published formulas [X] — parallel strings add their currents
    // (r = I/(N·i0)), k̂ = round(N(1 − r)), ΔE = (N·i0·G/1000 − I)·Vdc·Δt; 28.5 A × 800 V × 0.25 h.
    const r = 199.5 / (24 * 9.5);
    expect(r).toBeCloseTo(0.875, 12);
    expect(estimateStringsOut({ oi: r, peerMedianOi: 1, nStrings: 24 })!.k).toBe(3);
    const lost = lostEnergyKwh({ nStrings: 24, peerStringCurrentStc: 9.5, poa: 1000, current: 199.5, vdc: 800, hours: 0.25 });
    expect(lost).toBeCloseTo(5.7, 10);
    // Expected energy of the interval at r = 1 is lost ÷ (1 − r) = 5.70 / 0.125 = 45.6 kWh [X].
    const day = (d: string, oi: number, lostKwh: number): RecoveryDay => ({ day: d, oi, peer: 1, lostKwh, lossClass: null, valid: 40, total: 100 });
    const before = ["01", "02", "03", "04", "05"].map((d) => day(`2026-11-${d}`, r, lost));
    const expected = expectedDailyKwh(before, 24)!;
    expect(expected).toBeCloseTo(45.6, 10);
    // After the repair all 24 strings carry current again: the three come back, +5.70 kWh per interval-day.
    const rec = recovery({ before: before.map(() => r), after: [1, 1, 1, 1, 1], nStrings: 24, expectedDailyKwh: expected, tariffPerMwh: 60 });
    expect(rec.recoveredStrings).toBe(3);
    expect(rec.recoveredKwhPerDay).toBeCloseTo(5.7, 10);
    expect(rec.annualKwh).toBeCloseTo(5.7 * 365, 8);
    // 2080.5 kWh at 60 per MWh = 124.83 a year [X]
    expect(rec.annualValue).toBeCloseTo(124.83, 8);
    expect(rec.complete).toBe(true);
  });

  it("clean days: completeness ≥ 25 % (NREL PV Fleets QA), no data-quality, clipping or block-wide days", () => {
    const base: RecoveryDay = { day: "2026-11-01", oi: 0.9, peer: 1, lostKwh: 10, lossClass: null, valid: 25, total: 100 };
    expect(isCleanDay(base)).toBe(true);
    expect(isCleanDay({ ...base, valid: 24 })).toBe(false);
    expect(isCleanDay({ ...base, lossClass: "data_quality" })).toBe(false);
    expect(isCleanDay({ ...base, lossClass: "block_level" })).toBe(false);
    expect(isCleanDay({ ...base, lossClass: "strings_out" })).toBe(true);
    expect(isCleanDay({ ...base, peer: null })).toBe(false);
  });

  const common = { beforeDays: 5, afterDays: 5, windowDays: 5, nStrings: 12, currency: "EUR", resolution: "fuse blown" };
  it("verdict: recovered when back within half a string of the peers", () => {
    const v = recoveryVerdict({ ...common, beforeOi: 11 / 12, afterOi: 1.0, recoveredStrings: 1, kwhPerDay: 8.3, annualValue: 151.5 });
    expect(v.status).toBe("recovered");
    expect(v.flagState).toBe("recovered");
    expect(v.message).toContain("1 string back");
    expect(v.message).toContain("91.7 %");
  });
  it("verdict: still waiting while the after-window fills", () => {
    const v = recoveryVerdict({ ...common, afterDays: 2, beforeOi: 0.9, afterOi: 1, recoveredStrings: 1, kwhPerDay: 1, annualValue: 1 });
    expect(v.status).toBe("verifying");
    expect(v.message).toBe("Waiting for data: 2 of 5 clean days after the repair, 5 of 5 before.");
  });
  it("verdict: no recovery sends the flag back with a plain message", () => {
    const v = recoveryVerdict({ ...common, beforeOi: 11 / 12, afterOi: 11 / 12, recoveredStrings: 0, kwhPerDay: 0, annualValue: 0 });
    expect(v.status).toBe("not recovered");
    expect(v.flagState).toBe("new");
    expect(v.message).toMatch(/^Not recovered: 5 clean days after the repair the combiner is still about 1 string below its peers/);
    const nothing = recoveryVerdict({ ...common, resolution: "nothing found", beforeOi: 11 / 12, afterOi: 11 / 12, recoveredStrings: 0, kwhPerDay: 0, annualValue: 0 });
    expect(nothing.flagState).toBe("needs flight");
  });
  it("verdict: partial recovery goes back to triage", () => {
    const v = recoveryVerdict({ ...common, beforeOi: 10 / 12, afterOi: 11 / 12, recoveredStrings: 1, kwhPerDay: 8, annualValue: 100 });
    expect(v.status).toBe("not recovered");
    expect(v.flagState).toBe("new");
    expect(v.message).toContain("Partly recovered");
  });
});
