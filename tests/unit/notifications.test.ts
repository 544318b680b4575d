import { describe, expect, it } from "vitest";
import { assignmentMail, digestIsEmpty, digestMail, dueNotices, importMail, wants, type DueCandidate } from "~/domain/notifications";

const wo = (p: Partial<DueCandidate>): DueCandidate => ({ id: "a", state: "assigned", dueOn: "2026-11-10", assigneeId: "T", dueSoonNotifiedAt: null, overdueNotifiedAt: null, ...p });

describe("notification triggers", () => {
  it("due soon on the day before and the day itself, overdue after, each once", () => {
    expect(dueNotices([wo({})], "2026-11-08")).toEqual([]);
    expect(dueNotices([wo({})], "2026-11-09")).toEqual([{ id: "a", kind: "due soon" }]);
    expect(dueNotices([wo({})], "2026-11-10")).toEqual([{ id: "a", kind: "due soon" }]);
    expect(dueNotices([wo({ dueSoonNotifiedAt: new Date() })], "2026-11-10")).toEqual([]);
    expect(dueNotices([wo({ dueSoonNotifiedAt: new Date() })], "2026-11-11")).toEqual([{ id: "a", kind: "overdue" }]);
    expect(dueNotices([wo({ overdueNotifiedAt: new Date() })], "2026-11-12")).toEqual([]);
  });
  it("nothing for done, cancelled, unassigned or undated orders", () => {
    expect(dueNotices([wo({ state: "done" }), wo({ state: "cancelled" }), wo({ assigneeId: null }), wo({ dueOn: null })], "2026-11-11")).toEqual([]);
  });
  it("preferences: missing means yes; each kind follows its choice", () => {
    expect(wants(null, "assignment")).toBe(true);
    const p = { assignment: true, due: false, digest: true, imports: false };
    expect(wants(p, "due soon")).toBe(false);
    expect(wants(p, "overdue")).toBe(false);
    expect(wants(p, "import failed")).toBe(false);
    expect(wants(p, "digest")).toBe(true);
  });
  it("mails carry the place, the task and the safety line", () => {
    const m = assignmentMail({ number: 7, title: "B2-I3-C05: 1 string out", site: "Demo", where: "combiner B2-I3-C05, string 7", whatToCheck: "Check the fuse", dueOn: "2026-11-10", priority: "high", url: "http://x/wo" }, "Toni");
    expect(m.subject).toBe("WO-0007 assigned to you: B2-I3-C05: 1 string out");
    expect(m.text).toContain("combiner B2-I3-C05, string 7");
    expect(m.text).toContain("lock out/tag out");
    expect(importMail({ ok: false, fileName: "a.csv", site: "S", rowsAccepted: 0, rowsRejected: 0, error: "not UTF-8", url: "u" }).subject).toBe("Import failed: a.csv");
  });
  it("digest: skipped when empty, lists flags and done orders otherwise", () => {
    const empty = [{ site: "S", url: "u", newFlags: [], needsFlight: 0, done: [] }];
    expect(digestIsEmpty(empty)).toBe(true);
    const m = digestMail("2026-11-10", [{ site: "S", url: "u", newFlags: [{ combiner: "C1", stringsOut: 2, lostKwhPerDay: 12.34 }], needsFlight: 3, done: [{ number: 2, title: "Fuse", resolution: "fuse blown" }] }]);
    expect(m.subject).toBe("Sunsift daily digest 2026-11-10: 1 new flag");
    expect(m.text).toContain("C1: 2 strings out, 12.3 kWh/day lost");
    expect(m.text).toContain("Flags that need a drone flight: 3");
    expect(m.text).toContain("WO-0002 Fuse — found: fuse blown");
  });
});
