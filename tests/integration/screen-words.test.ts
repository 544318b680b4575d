/**
 * The words and instructions on the screens say what the product really does: where a work order
 * is made, what a figure is per day, what confidence and performance ratio mean, and what the
 * sign-in page says after a password reset. Also: the flags CSV holds every matching flag, and a
 * flag's state select starts on no change.
 */
import { describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { createOrg, db } from "../helpers/db";
import { http, signIn, visible } from "../helpers/http";
import { plantWithFlag, flagState, findingOf } from "./flights-fixture";
import { CONFIDENCE_HINT } from "../../app/domain/strings-out";


describe("where work orders come from", () => {
  it("the empty work-order board names the buttons that exist and links to them", async () => {
    const p = await plantWithFlag("EmptyBoard");
    const { cookie } = await signIn(p.people.lead.email, p.password);
    const board = await http(`/sites/${p.siteId}/work-orders`, { cookie });
    expect(board.status).toBe(200);
    const text = visible(board.body);
    expect(text).toContain("No work orders yet");
    expect(text).not.toContain("Send to field");
    expect(text).toContain("“Create work order” on the flag’s row");
    expect(board.body).toContain(`href="/sites/${p.siteId}/flags"`);
    expect(board.body).toContain(`href="/sites/${p.siteId}/flights"`);
    expect(board.body).toContain(`href="/sites/${p.siteId}/work-orders/new"`);
    // What it names is there: the flags page has "Create work order" for the flag.
    const flagsPage = await http(`/sites/${p.siteId}/flags`, { cookie });
    expect(flagsPage.body).toContain(`href="/sites/${p.siteId}/work-orders/new?flagId=${p.flag.id}"`);
  });

  it("the flight page offers “Create work order” per finding to those who may create one, and the link prefills the form", async () => {
    const p = await plantWithFlag("FindingOrder");
    const { flight, finding } = await findingOf(p);
    const link = `href="/sites/${p.siteId}/work-orders/new?findingId=${finding.id}"`;
    for (const role of ["lead", "admin"] as const) {
      const { cookie } = await signIn(p.people[role].email, p.password);
      const page = await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie });
      expect(page.status, role).toBe(200);
      expect(page.body, role).toContain(link);
      expect(page.body, role).toContain(">Create work order</a>");
      const form = await http(`/sites/${p.siteId}/work-orders/new?findingId=${finding.id}`, { cookie });
      expect(form.status).toBe(200);
      expect(form.body).toContain(`name="findingId" value="${finding.id}"`);
    }
    // A pilot logs flights but does not create work orders: no link.
    const { cookie: pilot } = await signIn(p.people.pilot.email, p.password);
    const page = await http(`/sites/${p.siteId}/flights/${flight.id}`, { cookie: pilot });
    expect(page.status).toBe(200);
    expect(page.body).toContain("findings-table");
    expect(page.body).not.toContain("work-orders/new");
  });
});

describe("portfolio and sign-in words", () => {
  it("the empty portfolio points at the “Add a site” button on the Portfolio, not at Settings", async () => {
    const o = await createOrg("NoSites");
    await db.delete(schema.sites).where(eq(schema.sites.id, o.site.id));
    const { cookie } = await signIn(o.people.admin.email, o.password);
    const page = await http("/portfolio", { cookie });
    expect(page.status).toBe(200);
    const text = visible(page.body);
    expect(text).toContain("No sites yet");
    expect(text).not.toContain("under Settings");
    expect(text).toContain("Add one with “Add a site” above");
    expect(page.body).toContain('href="/sites/new"');
  });

  it("the sign-in page confirms a password change in its server HTML, and only after a reset", async () => {
    const after = await http("/login?reset=1");
    expect(after.status).toBe(200);
    expect(after.body).toContain("Your password was changed. Sign in with the new one.");
    const plain = await http("/login");
    expect(plain.status).toBe(200);
    expect(plain.body).not.toContain("Your password was changed");
  });
});

describe("flags screen and export", () => {
  it("the flags CSV holds every flag that matches the filter, past 500", async () => {
    const p = await plantWithFlag("CsvAll");
    const day = new Date().toISOString().slice(0, 10);
    const extra = Array.from({ length: 650 }, (_, i) => ({
      siteId: p.siteId,
      combinerId: p.combiners[1]!.id,
      state: "dismissed" as const,
      firstDay: day,
      lastDay: day,
      stringsOut: 1,
      confidence: 0.5,
      lostKwhPerDay: i,
      lostKwhToDate: i,
      open: false,
      stateReason: `old ${i}`,
    }));
    await db.insert(schema.flags).values(extra);
    const { cookie } = await signIn(p.people.engineer.email, p.password);
    const all = await http(`/sites/${p.siteId}/flags.csv?state=all`, { cookie });
    expect(all.status).toBe(200);
    const lines = all.body.trim().split(/\r?\n/);
    expect(lines).toHaveLength(1 + 652);
    const reasons = new Set(lines.filter((l) => l.includes("old ")).map((l) => /old \d+/.exec(l)![0]));
    expect(reasons.size).toBe(650);
    // The filter still holds: the dismissed ones only, and the open ones only.
    const dismissed = await http(`/sites/${p.siteId}/flags.csv?state=dismissed`, { cookie });
    expect(dismissed.body.trim().split(/\r?\n/)).toHaveLength(1 + 650);
    const open = await http(`/sites/${p.siteId}/flags.csv`, { cookie });
    expect(open.body.trim().split(/\r?\n/)).toHaveLength(1 + 2);
  });

  it("a flag's state select starts on “Choose…”, and saving it untouched changes nothing", async () => {
    const p = await plantWithFlag("StateSelect");
    const { cookie } = await signIn(p.people.lead.email, p.password);
    const page = await http(`/sites/${p.siteId}/flags`, { cookie });
    expect(page.status).toBe(200);
    const select = new RegExp(`<select[^>]*id="st-${p.flag.id}"[^>]*>([\\s\\S]*?)</select>`).exec(page.body);
    expect(select).not.toBeNull();
    const selected = [...select![1]!.matchAll(/<option([^>]*)>([^<]*)<\/option>/g)].filter((m) => /\bselected=""/.test(m[1]!)).map((m) => m[2]);
    expect(selected).toEqual(["Choose…"]);
    // The form as the browser sends it with the select untouched: no state at all.
    const r = await http(`/sites/${p.siteId}/flags`, { cookie, form: { flagId: p.flag.id, reason: "" } });
    expect(r.status).toBe(400);
    expect(r.body).toContain("Choose the new state first");
    const empty = await http(`/sites/${p.siteId}/flags`, { cookie, form: { flagId: p.flag.id, state: "", reason: "looked fine" } });
    expect(empty.status).toBe(400);
    expect((await flagState(p.flag.id)).state).toBe("new");
    // A chosen state still saves.
    const ok = await http(`/sites/${p.siteId}/flags`, { cookie, form: { flagId: p.flag.id, state: "dismissed", reason: "known inverter fault" } });
    expect(ok.status).toBe(200);
    expect((await flagState(p.flag.id)).state).toBe("dismissed");
  });

  it("money lost is shown per day on the flags and combiner screens", async () => {
    const p = await plantWithFlag("PerDay");
    const { cookie } = await signIn(p.people.engineer.email, p.password);
    // 60 kWh/day × 55 EUR/MWh = 3.30 EUR/day
    const flagsPage = await http(`/sites/${p.siteId}/flags`, { cookie });
    expect(flagsPage.body).toContain("(3.30 EUR/day)");
    const comb = await http(`/sites/${p.siteId}/combiners/${p.combiners[0]!.id}`, { cookie });
    expect(comb.status).toBe(200);
    expect(comb.body).toContain("3.30 EUR/day</dd>");
    expect(comb.body).toContain("60 kWh/day</dd>");
  });

  it("confidence is explained where it is shown, in words of what the analysis computes", async () => {
    expect(CONFIDENCE_HINT).toContain("whole number of strings");
    const p = await plantWithFlag("ConfHint");
    const { cookie } = await signIn(p.people.engineer.email, p.password);
    const flagsPage = visible((await http(`/sites/${p.siteId}/flags`, { cookie })).body);
    expect(flagsPage).toContain(`title="${CONFIDENCE_HINT}"`);
    expect(flagsPage).toContain(`data-testid="confidence-hint">${CONFIDENCE_HINT}</p>`);
    const comb = visible((await http(`/sites/${p.siteId}/combiners/${p.combiners[0]!.id}`, { cookie })).body);
    expect(comb).toContain(`title="${CONFIDENCE_HINT}"`);
    expect(comb).toContain("how close the shortfall is to a whole number of strings");
  });
});

describe("overview", () => {
  it("the performance ratio says final yield ÷ reference yield, with the 1 kW/m² reference irradiance", async () => {
    const p = await plantWithFlag("PrHint");
    const day = new Date(Date.now() - 86_400_000).toISOString().slice(0, 10);
    await db.insert(schema.combinerDays).values({ siteId: p.siteId, combinerId: p.combiners[0]!.id, day, validIntervals: 0, totalIntervals: 0 });
    const { cookie } = await signIn(p.people.engineer.email, p.password);
    const page = await http(`/sites/${p.siteId}`, { cookie });
    expect(page.status).toBe(200);
    expect(page.body).toContain("Performance ratio, last 7 days");
    expect(page.body).toContain("final yield ÷ reference yield (IEC 61724-1)");
    expect(page.body).toContain("plane-of-array insolation ÷ 1 kW/m²");
  });
});
