import { describe, expect, it } from "vitest";
import { can, homePath, PERMISSIONS, ROLES, scopeAllows, SITE_SCREENS } from "../../app/permissions";

describe("permission table", () => {
  it("lets owners only read: no permission that changes data includes the owner", () => {
    const changing = Object.keys(PERMISSIONS).filter((p) => !p.endsWith(":view"));
    for (const p of changing) expect(can(["owner"], p as keyof typeof PERMISSIONS), p).toBe(false);
    expect(can(["owner"], "recovery:view")).toBe(true);
  });

  it("gives each role the work DESIGN assigns it", () => {
    expect(can(["engineer"], "data:import")).toBe(true);
    expect(can(["engineer"], "workorders:manage")).toBe(false);
    expect(can(["lead"], "workorders:manage")).toBe(true);
    expect(can(["lead"], "flags:triage")).toBe(true);
    expect(can(["pilot"], "flights:log")).toBe(true);
    expect(can(["pilot"], "data:import")).toBe(false);
    expect(can(["technician"], "workorders:work")).toBe(true);
    expect(can(["technician"], "flags:view")).toBe(false);
    expect(can(["admin"], "settings:users")).toBe(true);
    expect(can(["engineer"], "settings:users")).toBe(false);
  });

  it("combines several roles of one person", () => {
    expect(can(["pilot", "technician"], "flights:log")).toBe(true);
    expect(can(["pilot", "technician"], "workorders:work")).toBe(true);
    expect(can([], "site:view")).toBe(false);
  });

  it("shows every role at least one screen, and owners only read-only ones", () => {
    for (const r of ROLES) expect(SITE_SCREENS.filter((s) => can([r], s.permission)).length, r).toBeGreaterThan(0);
    const ownerScreens = SITE_SCREENS.filter((s) => can(["owner"], s.permission)).map((s) => s.key);
    expect(ownerScreens).toEqual(["overview", "recovery"]);
  });

  it("token scopes: admin covers all, write covers read, read does not write", () => {
    expect(scopeAllows(["admin"], "write")).toBe(true);
    expect(scopeAllows(["write"], "read")).toBe(true);
    expect(scopeAllows(["read"], "write")).toBe(false);
    expect(scopeAllows([], "read")).toBe(false);
  });

  it("sends technicians and pilots to their own lists, the rest to the portfolio", () => {
    expect(homePath(["technician"], "s1")).toBe("/sites/s1/work-orders");
    expect(homePath(["pilot"], "s1")).toBe("/sites/s1/fly-list");
    expect(homePath(["engineer"], "s1")).toBe("/portfolio");
    expect(homePath(["pilot"], null)).toBe("/portfolio");
  });
});
