/**
 * Who may do what: one table, read by the server (requirePermission) and by the UI (navigation,
 * buttons). Roles are per organisation; a person may hold several.
 */
export const ROLES = ["admin", "engineer", "lead", "pilot", "technician", "owner"] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
  admin: "Admin",
  engineer: "Performance engineer",
  lead: "O&M lead",
  pilot: "Pilot",
  technician: "Technician",
  owner: "Owner",
};

export const PERMISSIONS = {
  "site:view": ["admin", "engineer", "lead", "pilot", "technician", "owner"],
  "site:edit": ["admin", "engineer"],
  "layout:view": ["admin", "engineer", "lead", "pilot", "technician"],
  "layout:import": ["admin", "engineer"],
  "data:view": ["admin", "engineer"],
  "data:import": ["admin", "engineer"],
  "analysis:run": ["admin", "engineer"],
  "flags:view": ["admin", "engineer", "lead"],
  "flags:triage": ["admin", "engineer", "lead"],
  "flylist:view": ["admin", "lead", "pilot"],
  "flights:view": ["admin", "lead", "pilot"],
  "flights:log": ["admin", "lead", "pilot"],
  "workorders:view": ["admin", "lead", "technician"],
  "workorders:manage": ["admin", "lead"],
  "workorders:work": ["technician", "lead"],
  "recovery:view": ["admin", "engineer", "lead", "pilot", "technician", "owner"],
  "settings:users": ["admin"],
  "settings:tokens": ["admin"],
  "outbox:view": ["admin"],
  "audit:view": ["admin"],
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof PERMISSIONS;

export function can(roles: readonly Role[], permission: Permission): boolean {
  const allowed: readonly Role[] = PERMISSIONS[permission];
  return roles.some((r) => allowed.includes(r));
}

export function isRole(value: string): value is Role {
  return (ROLES as readonly string[]).includes(value);
}

/** API token scopes: read, write (imports), admin (everything). */
export const TOKEN_SCOPES = ["read", "write", "admin"] as const;
export type TokenScope = (typeof TOKEN_SCOPES)[number];

export function scopeAllows(scopes: readonly string[], needed: TokenScope): boolean {
  if (scopes.includes("admin")) return true;
  if (needed === "read") return scopes.includes("read") || scopes.includes("write");
  return scopes.includes(needed);
}

/** The screens of a site, in navigation order, with the permission each needs. */
export const SITE_SCREENS = [
  { key: "overview", label: "Overview", path: "", permission: "site:view" },
  { key: "layout", label: "Layout", path: "/layout", permission: "layout:view" },
  { key: "data", label: "Data", path: "/data", permission: "data:view" },
  { key: "flags", label: "Flags", path: "/flags", permission: "flags:view" },
  { key: "fly-list", label: "Fly list", path: "/fly-list", permission: "flylist:view" },
  { key: "flights", label: "Flights", path: "/flights", permission: "flights:view" },
  { key: "work-orders", label: "Work orders", path: "/work-orders", permission: "workorders:view" },
  { key: "inspections", label: "Inspections", path: "/inspections", permission: "workorders:view" },
  { key: "recovery", label: "Recovery", path: "/recovery", permission: "recovery:view" },
  { key: "settings", label: "Site settings", path: "/settings", permission: "site:edit" },
] as const satisfies readonly { key: string; label: string; path: string; permission: Permission }[];

/** Where a person lands after signing in. */
export function homePath(roles: readonly Role[], firstSiteId: string | null): string {
  if (firstSiteId) {
    if (roles.includes("technician") && !roles.some((r) => r === "admin" || r === "lead" || r === "engineer"))
      return `/sites/${firstSiteId}/work-orders`;
    if (roles.includes("pilot") && !roles.some((r) => r === "admin" || r === "lead" || r === "engineer"))
      return `/sites/${firstSiteId}/fly-list`;
  }
  return "/portfolio";
}
