/**
 * Every route module against every kind of caller. A route module without a row here fails the
 * first test, so a new screen cannot ship without deciding who may open it.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import routes from "../../app/routes";
import { createOrg } from "../helpers/db";
import { http, signIn } from "../helpers/http";

type Caller = "anon" | "admin" | "engineer" | "lead" | "pilot" | "technician" | "owner" | "other";
type Expect = 200 | 302 | 401 | 403 | 404 | "login" | "skip-action";
const PEOPLE = ["admin", "engineer", "lead", "pilot", "technician", "owner"] as const;

/** Who may open (GET) and post (POST) each route; `site` routes are asked for the caller org's site. */
interface Row {
  path: (siteId: string) => string;
  public?: boolean;
  get: readonly string[] | "public" | "token";
  post?: readonly string[] | "public";
}

const ALL = PEOPLE;
const TABLE: Record<string, Row> = {
  "routes/home.tsx": { path: () => "/", get: "public" },
  "routes/login.tsx": { path: () => "/login", get: "public", post: "public" },
  "routes/logout.tsx": { path: () => "/logout", get: "public", post: "public" },
  "routes/forgot-password.tsx": { path: () => "/forgot-password", get: "public", post: "public" },
  "routes/reset-password.tsx": { path: () => "/reset-password/not-a-token", get: "public", post: "public" },
  "routes/invite.tsx": { path: () => "/invite/not-a-token", get: "public", post: "public" },
  "routes/healthz.ts": { path: () => "/healthz", get: "public" },
  "routes/app-layout.tsx": { path: () => "/portfolio", get: ALL },
  "routes/portfolio.tsx": { path: () => "/portfolio", get: ALL },
  "routes/switch-organisation.tsx": { path: () => "/organisations", get: ALL, post: ALL },
  "routes/site-new.tsx": { path: () => "/sites/new", get: ["admin", "engineer"], post: ["admin", "engineer"] },
  "routes/site-overview.tsx": { path: (s) => `/sites/${s}`, get: ALL, post: ["admin", "engineer"] },
  "routes/site-layout.tsx": { path: (s) => `/sites/${s}/layout`, get: ["admin", "engineer", "lead", "pilot", "technician"], post: ["admin", "engineer"] },
  "routes/site-data.tsx": { path: (s) => `/sites/${s}/data`, get: ["admin", "engineer"], post: ["admin", "engineer"] },
  "routes/site-data.import.tsx": { path: (s) => `/sites/${s}/data/latest`, get: ["admin", "engineer"], post: ["admin", "engineer"] },
  "routes/site-data.status.tsx": { path: (s) => `/sites/${s}/data/latest/status`, get: ["admin", "engineer"] },
  "routes/site-flags.tsx": { path: (s) => `/sites/${s}/flags`, get: ["admin", "engineer", "lead"], post: ["admin", "engineer", "lead"] },
  "routes/site-fly-list.tsx": { path: (s) => `/sites/${s}/fly-list`, get: ["admin", "lead", "pilot"] },
  "routes/site-flights.tsx": { path: (s) => `/sites/${s}/flights`, get: ["admin", "lead", "pilot"], post: ["admin", "lead", "pilot"] },
  "routes/site-flight.tsx": { path: (s) => `/sites/${s}/flights/${flightOf[s] ?? "00000000-0000-4000-8000-000000000000"}`, get: ["admin", "lead", "pilot"], post: ["admin", "lead", "pilot"] },
  "routes/site-fly-list.brief.tsx": { path: (s) => `/sites/${s}/fly-list/brief`, get: ["admin", "lead", "pilot"] },
  "routes/settings-inspection.tsx": { path: () => "/settings/inspection", get: ["admin"], post: ["admin"] },
  "routes/api.sites.findings.ts": { path: (s) => `/api/v1/sites/${s}/findings`, get: "token", post: "public" },
  "routes/api.sites.fly-list.ts": { path: (s) => `/api/v1/sites/${s}/fly-list`, get: "token" },
  "routes/site-work-orders.tsx": { path: (s) => `/sites/${s}/work-orders`, get: ["admin", "lead", "technician"] },
  "routes/site-work-order-new.tsx": { path: (s) => `/sites/${s}/work-orders/new`, get: ["admin", "lead"], post: ["admin", "lead"] },
  "routes/site-work-order.tsx": { path: (s) => `/sites/${s}/work-orders/${workOrderId}`, get: ["admin", "lead", "technician"], post: ["admin", "lead", "technician"] },
  "routes/site-photo.ts": { path: (s) => `/sites/${s}/photos/${photoRest}`, get: ["admin", "lead", "technician"] },
  "routes/site-inspections.tsx": { path: (s) => `/sites/${s}/inspections`, get: ["admin", "lead", "technician"], post: ["admin", "lead", "technician"] },
  "routes/site-recovery-csv.ts": { path: (s) => `/sites/${s}/recovery.csv`, get: ALL },
  "routes/site-recovery-report.tsx": { path: (s) => `/sites/${s}/recovery/report`, get: ALL },
  "routes/site-recovery.tsx": { path: (s) => `/sites/${s}/recovery`, get: ALL },
  "routes/site-settings.tsx": { path: (s) => `/sites/${s}/settings`, get: ["admin", "engineer"], post: ["admin", "engineer"] },
  "routes/settings-users.tsx": { path: () => "/settings", get: ["admin"], post: ["admin"] },
  "routes/settings-tokens.tsx": { path: () => "/settings/tokens", get: ["admin"], post: ["admin"] },
  "routes/settings-outbox.tsx": { path: () => "/settings/outbox", get: ["admin"] },
  "routes/settings-notifications.tsx": { path: () => "/settings/notifications", get: ALL, post: ALL },
  "routes/settings-audit.tsx": { path: () => "/settings/audit", get: ["admin"] },
  "routes/api.me.ts": { path: () => "/api/v1/me", get: "token" },
  "routes/site-combiner.tsx": { path: (s) => `/sites/${s}/combiners/1`, get: ["admin", "engineer", "lead"] },
  "routes/site-flight-windows-json.ts": { path: (s) => `/sites/${s}/flight-windows.json`, get: ["admin", "lead", "pilot"] },
  "routes/site-plant-json.ts": { path: (s) => `/sites/${s}/plant.json`, get: ALL },
  "routes/site-flags-csv.ts": { path: (s) => `/sites/${s}/flags.csv`, get: ["admin", "engineer", "lead"] },
  "routes/api.flags.ts": { path: (s) => `/api/v1/sites/${s}/flags`, get: "token" },
  "routes/api.analysis.ts": { path: (s) => `/api/v1/sites/${s}/analysis`, get: "token", post: ["admin", "engineer"] },
  "routes/api.analysis-run.ts": { path: (s) => `/api/v1/sites/${s}/analysis/00000000-0000-4000-8000-000000000000`, get: "token" },
  "routes/api.combiner-series.ts": { path: (s) => `/api/v1/sites/${s}/combiners/1/series`, get: "token" },
  "routes/api.sites.ts": { path: () => "/api/v1/sites", get: "token", post: "public" },
  "routes/api.sites.layout.ts": { path: (s) => `/api/v1/sites/${s}/layout`, get: "token", post: "public" },
  "routes/api.sites.readings.ts": { path: (s) => `/api/v1/sites/${s}/readings`, get: "token", post: "public" },
  "routes/api.imports.show.ts": { path: () => "/api/v1/imports/00000000-0000-4000-8000-000000000000", get: "token" },
  "routes/api.openapi.ts": { path: () => "/api/v1/openapi.json", get: "public" },
};

function routeFiles(): string[] {
  const out: string[] = [];
  const walk = (rs: { file: string; children?: unknown[] }[]) => {
    for (const r of rs) {
      out.push(r.file);
      if (r.children) walk(r.children as never);
    }
  };
  walk(routes as never);
  return out;
}

function exportsOf(file: string) {
  const src = readFileSync(new URL(`../../app/${file}`, import.meta.url), "utf8");
  return { loader: /export (async )?function loader\b/.test(src), action: /export (async )?function action\b/.test(src) };
}

let site = "";
/** A work order of the caller organisation's site, for the work-order detail row. */
let workOrderId = "";
/** The path of a photo of that work order below /sites/:siteId/photos/. */
let photoRest = "";
let otherSite = "";
/** A flight on the caller org's site, for the flight screen's row. */
const flightOf: Record<string, string> = {};
const cookies: Partial<Record<Caller, string | null>> = {};

beforeAll(async () => {
  const mine = await createOrg("Access");
  const other = await createOrg("Other");
  site = mine.site.id;
  {
    const { db } = await import("../helpers/db");
    const schema = await import("../../app/db/schema");
    const [c] = await db.insert(schema.devices).values({ siteId: site, kind: "combiner", name: "C-ACCESS", stringCount: 12 }).returning();
    const [wo] = await db
      .insert(schema.workOrders)
      .values({ orgId: mine.org.id, siteId: site, number: 1, combinerId: c!.id, stringNumbers: [3], title: "Access check", whatToCheck: "Check string 3" })
      .returning();
    workOrderId = wo!.id;
    // A photo of that work order (a 1×1 PNG), for the photo route's row.
    const { putObject } = await import("../../app/services/storage.server");
    const png = Buffer.from("iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR4nGNgYGD4DwABBAEAwS2OUAAAAABJRU5ErkJggg==", "base64");
    photoRest = `work-orders/${wo!.id}/${"A".repeat(22)}/access.png`;
    await putObject(`sites/${site}/${photoRest}`, png, png.length, "image/png");
    await db.update(schema.workOrders).set({ photos: [`sites/${site}/${photoRest}`] }).where((await import("drizzle-orm")).eq(schema.workOrders.id, wo!.id));
  }
  otherSite = other.site.id;
  cookies.anon = null;
  for (const p of PEOPLE) cookies[p] = (await signIn(mine.people[p].email, mine.password)).cookie;
  cookies.other = (await signIn(other.people.admin.email, other.password)).cookie;
  for (const [k, v] of Object.entries(cookies)) if (k !== "anon") expect(v, `${k} signed in`).toBeTruthy();
});

beforeAll(async () => {
  const { db } = await import("../helpers/db");
  const schema = await import("../../app/db/schema");
  const [f] = await db.insert(schema.flights).values({ siteId: site, startedAt: new Date(), blockIds: [], pilotName: "Access pilot", aircraft: "test" }).returning();
  flightOf[site] = f!.id;
});

describe("route access table", () => {
  it("has a row for every route module, and rows only for real modules", () => {
    const files = routeFiles();
    expect(files.filter((f) => !(f in TABLE))).toEqual([]);
    expect(Object.keys(TABLE).filter((f) => !files.includes(f))).toEqual([]);
    for (const f of files) {
      const ex = exportsOf(f);
      if (ex.action) expect(TABLE[f]!.post, `${f} has an action: say who may post`).toBeDefined();
      if (!ex.action) expect(TABLE[f]!.post === undefined || f === "routes/logout.tsx", `${f} has no action`).toBe(true);
    }
  });

  for (const [file, row] of Object.entries(TABLE)) {
    if (row.get === "public" || row.get === "token") continue;
    const allowed = row.get;
    describe(file, () => {
      it("GET: signed out is sent to sign-in", async () => {
        const r = await http(row.path(site));
        expect(r.status).toBe(302);
        expect(r.location).toMatch(/^\/login\?next=/);
      });
      for (const who of PEOPLE) {
        const expected = allowed.includes(who) ? 200 : 403;
        it(`GET as ${who} → ${expected}`, async () => {
          const r = await http(row.path(site), { cookie: cookies[who]! });
          expect(r.status).toBe(expected);
        });
      }
      if (row.path("X") !== row.path("Y")) {
        it("GET as another organisation's admin → 404, as for a missing site", async () => {
          const r = await http(row.path(site), { cookie: cookies.other! });
          expect(r.status).toBe(404);
          const missing = await http(row.path("00000000-0000-4000-8000-000000000000"), { cookie: cookies.admin! });
          expect(missing.status).toBe(404);
          if (file.endsWith(".tsx")) expect(r.body).toContain("Page not found");
        });
      }
      if (Array.isArray(row.post)) {
        const posters = row.post as readonly string[];
        for (const who of PEOPLE) {
          if (posters.includes(who)) continue;
          it(`POST as ${who} → 403`, async () => {
            const r = await http(row.path(site), { cookie: cookies[who]!, form: { intent: "noop" } });
            expect(r.status).toBe(403);
          });
        }
        it("POST signed out → sign-in (API routes: 401)", async () => {
          const r = await http(row.path(site), { form: { intent: "noop" } });
          if (file.startsWith("routes/api.")) return void expect(r.status).toBe(401);
          expect(r.status).toBe(302);
          expect(r.location).toMatch(/^\/login/);
        });
      }
    });
  }

  it("an owner without access to a site of their own organisation gets 404", async () => {
    const mine = await createOrg("OwnerScope");
    const { db } = await import("../helpers/db");
    const schema = await import("../../app/db/schema");
    const { eq } = await import("drizzle-orm");
    await db.delete(schema.siteAccess).where(eq(schema.siteAccess.userId, mine.people.owner.id));
    const { cookie } = await signIn(mine.people.owner.email, mine.password);
    expect((await http(`/sites/${mine.site.id}`, { cookie })).status).toBe(404);
    const portfolio = await http("/portfolio", { cookie });
    expect(portfolio.body).not.toContain(mine.site.name);
  });

  it("the other organisation's site stays invisible in the portfolio", async () => {
    const r = await http("/portfolio", { cookie: cookies.admin! });
    expect(r.status).toBe(200);
    expect(r.body).not.toContain(otherSite);
  });
});
