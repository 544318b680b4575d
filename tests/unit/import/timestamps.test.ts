import { describe, expect, it } from "vitest";
import { detectDateOrder, parseTimestamp } from "~/domain/import/timestamps";

const iso = (text: string, zone = "Europe/Madrid", opts = {}) => {
  const r = parseTimestamp(text, zone, opts);
  if (!r.ok) throw new Error(r.message);
  return new Date(r.epochMs).toISOString();
};

describe("parseTimestamp formats", () => {
  it("reads ISO 8601 with Z or an offset, ignoring the zone", () => {
    expect(iso("2026-06-01T12:00:00Z")).toBe("2026-06-01T12:00:00.000Z");
    expect(iso("2026-06-01T12:00:00+02:00")).toBe("2026-06-01T10:00:00.000Z");
    expect(iso("2026-06-01T12:00:00-0700")).toBe("2026-06-01T19:00:00.000Z");
    expect(iso("2026-06-01 12:00+05:30")).toBe("2026-06-01T06:30:00.000Z");
    expect(iso("2026-06-01T12:00:00.250Z")).toBe("2026-06-01T12:00:00.250Z");
  });
  it("reads local forms in the site zone", () => {
    expect(iso("2026-06-01 12:00")).toBe("2026-06-01T10:00:00.000Z");
    expect(iso("2026-06-01 12:00:30")).toBe("2026-06-01T10:00:30.000Z");
    expect(iso("2026-01-15T12:00")).toBe("2026-01-15T11:00:00.000Z");
    expect(iso("2026/01/15 12:00")).toBe("2026-01-15T11:00:00.000Z");
    expect(iso("15.01.2026 12:00")).toBe("2026-01-15T11:00:00.000Z");
    expect(iso("2026-01-15 24:00")).toBe("2026-01-15T23:00:00.000Z");
  });
  it("reads day/month only when it cannot be swapped, or when told", () => {
    expect(iso("29/03/2026 10:00")).toBe("2026-03-29T08:00:00.000Z");
    expect(iso("3/29/2026 10:00 AM", "America/Los_Angeles")).toBe("2026-03-29T17:00:00.000Z");
    expect(iso("3/29/2026 12:30 PM", "America/Los_Angeles")).toBe("2026-03-29T19:30:00.000Z");
    expect(iso("05/05/2026 10:00")).toBe("2026-05-05T08:00:00.000Z");
    expect(parseTimestamp("03/04/2026 10:00", "Europe/Madrid")).toEqual({
      ok: false,
      reason: "date-order",
      message: '"03/04/2026 10:00" could be day/month or month/day: choose the date order for this file',
    });
    expect(iso("03/04/2026 10:00", "Europe/Madrid", { dateOrder: "DMY" })).toBe("2026-04-03T08:00:00.000Z");
    expect(iso("03/04/2026 10:00", "Europe/Madrid", { dateOrder: "MDY" })).toBe("2026-03-04T09:00:00.000Z");
  });
  it("refuses impossible dates and unknown shapes with the reason", () => {
    expect(parseTimestamp("2026-02-29 10:00", "UTC")).toMatchObject({ ok: false, reason: "invalid", message: '"2026-02-29 10:00" is not a valid timestamp: day 29 does not exist in that month' });
    expect(parseTimestamp("2026-06-01 25:00", "UTC")).toMatchObject({ ok: false, message: '"2026-06-01 25:00" is not a valid timestamp: the time of day is out of range' });
    expect(parseTimestamp("yesterday", "UTC")).toMatchObject({
      ok: false,
      reason: "invalid",
      message: '"yesterday" is not a valid timestamp: expected e.g. 2026-03-29 14:15, 2026-03-29T14:15:00+02:00 or 29/03/2026 14:15',
    });
    expect(parseTimestamp("  ", "UTC")).toMatchObject({ ok: false, reason: "invalid", message: "the timestamp is empty" });
  });
});

// Europe/Madrid follows the EU summer-time rule (Directive 2000/84/EC): summer time starts on
// the last Sunday of March and ends on the last Sunday of October, both at 01:00 UTC. In 2026
// those Sundays are 29 March (02:00 CET → 03:00 CEST) and 25 October (03:00 CEST → 02:00 CET).
describe("Europe/Madrid clock changes in 2026", () => {
  it("29 March: 02:00–02:59 local does not exist and is reported, not shifted", () => {
    expect(iso("2026-03-29 01:59")).toBe("2026-03-29T00:59:00.000Z");
    for (const t of ["2026-03-29 02:00", "2026-03-29 02:30", "2026-03-29 02:59"]) {
      expect(parseTimestamp(t, "Europe/Madrid")).toEqual({
        ok: false,
        reason: "nonexistent",
        message: `"${t}" does not exist in Europe/Madrid: the clocks jump from +01:00 to +02:00 over that hour`,
      });
    }
    expect(iso("2026-03-29 03:00")).toBe("2026-03-29T01:00:00.000Z");
  });
  it("25 October: 02:00–02:59 local happens twice and is reported, not guessed", () => {
    expect(iso("2026-10-25 01:59")).toBe("2026-10-24T23:59:00.000Z");
    expect(parseTimestamp("2026-10-25 02:30", "Europe/Madrid")).toEqual({
      ok: false,
      reason: "ambiguous",
      message: '"2026-10-25 02:30" happens twice in Europe/Madrid (first at +02:00, then at +01:00): write it with its UTC offset',
    });
    expect(parseTimestamp("25/10/2026 02:00", "Europe/Madrid")).toMatchObject({ ok: false, reason: "ambiguous" });
    expect(iso("2026-10-25 03:00")).toBe("2026-10-25T02:00:00.000Z");
    // With the offset written, both passes through the hour are distinct instants.
    expect(iso("2026-10-25T02:30+02:00")).toBe("2026-10-25T00:30:00.000Z");
    expect(iso("2026-10-25T02:30+01:00")).toBe("2026-10-25T01:30:00.000Z");
  });
});

// America/Los_Angeles follows the US rule (Energy Policy Act of 2005, 15 U.S.C. § 260a): DST
// starts the second Sunday of March and ends the first Sunday of November, at 02:00 local time.
// In 2026: 8 March (02:00 PST → 03:00 PDT) and 1 November (02:00 PDT → 01:00 PST).
describe("America/Los_Angeles clock changes in 2026", () => {
  it("8 March: 02:xx is missing", () => {
    expect(parseTimestamp("2026-03-08 02:15", "America/Los_Angeles")).toMatchObject({ ok: false, reason: "nonexistent" });
    expect(iso("2026-03-08 01:45", "America/Los_Angeles")).toBe("2026-03-08T09:45:00.000Z");
    expect(iso("2026-03-08 03:00", "America/Los_Angeles")).toBe("2026-03-08T10:00:00.000Z");
  });
  it("1 November: 01:xx is repeated", () => {
    expect(parseTimestamp("11/01/2026 01:30", "America/Los_Angeles", { dateOrder: "MDY" })).toEqual({
      ok: false,
      reason: "ambiguous",
      message: '"11/01/2026 01:30" happens twice in America/Los_Angeles (first at -07:00, then at -08:00): write it with its UTC offset',
    });
    expect(iso("2026-11-01 00:59", "America/Los_Angeles")).toBe("2026-11-01T07:59:00.000Z");
    expect(iso("2026-11-01 02:00", "America/Los_Angeles")).toBe("2026-11-01T10:00:00.000Z");
  });
});

// Lord Howe Island shifts by 30 minutes, at 02:00 local (15:30 UTC), first Sunday of October and
// of April (New South Wales Standard Time Act 1987, as recorded in the IANA tz database's
// "australasia" file): a transition off the UTC hour, which the offset cache must not blur.
describe("Australia/Lord_Howe half-hour clock changes in 2026", () => {
  it("4 October: 02:00–02:29 is missing", () => {
    expect(iso("2026-10-04 01:59", "Australia/Lord_Howe")).toBe("2026-10-03T15:29:00.000Z");
    expect(parseTimestamp("2026-10-04 02:00", "Australia/Lord_Howe")).toMatchObject({ ok: false, reason: "nonexistent" });
    expect(parseTimestamp("2026-10-04 02:29", "Australia/Lord_Howe")).toMatchObject({ ok: false, reason: "nonexistent" });
    expect(iso("2026-10-04 02:30", "Australia/Lord_Howe")).toBe("2026-10-03T15:30:00.000Z");
  });
  it("5 April: 01:30–01:59 is repeated", () => {
    expect(iso("2026-04-05 01:29", "Australia/Lord_Howe")).toBe("2026-04-04T14:29:00.000Z");
    expect(parseTimestamp("2026-04-05 01:45", "Australia/Lord_Howe")).toMatchObject({
      ok: false,
      reason: "ambiguous",
      message: '"2026-04-05 01:45" happens twice in Australia/Lord_Howe (first at +11:00, then at +10:30): write it with its UTC offset',
    });
    expect(iso("2026-04-05 02:00", "Australia/Lord_Howe")).toBe("2026-04-04T15:30:00.000Z");
  });
});

describe("detectDateOrder", () => {
  it("tells day-first from month-first when a sample proves it", () => {
    expect(detectDateOrder(["01/02/2026 10:00", "13/02/2026 10:00"])).toBe("DMY");
    expect(detectDateOrder(["02/01/2026 10:00", "02/13/2026 10:00"])).toBe("MDY");
    expect(detectDateOrder(["01/02/2026 10:00", "02/01/2026 10:00"])).toBeNull();
    expect(detectDateOrder(["2026-02-13 10:00"])).toBeNull();
  });
});
