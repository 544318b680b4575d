/**
 * The production server itself (scripts/serve.mjs), started here a second time on a port of its
 * own and without TRUST_PROXY, as `npm start` runs it: what it serves before React Router, whose
 * address it believes, and that it stops when asked.
 */
import type { ChildProcess } from "node:child_process";
import { readdirSync } from "node:fs";
import { join } from "node:path";
import { BUILD, ROOT, startSecondServer, type SecondServer } from "../helpers/second-server";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "~/db/schema";
import { db } from "../helpers/db";

let second: SecondServer;
let server: ChildProcess;
let BASE = "";

beforeAll(async () => {
  second = await startSecondServer(7, ["TRUST_PROXY"]);
  server = second.process;
  BASE = second.base;
});

afterAll(() => {
  if (server.exitCode === null) server.kill("SIGKILL");
});

describe("scripts/serve.mjs", () => {
  it("serves built assets for a year, public files, and pages through React Router", async () => {
    const asset = readdirSync(join(ROOT, BUILD, "client/assets")).find((f) => f.endsWith(".css"))!;
    const a = await fetch(`${BASE}/assets/${asset}`);
    expect(a.status).toBe(200);
    expect(a.headers.get("cache-control")).toContain("immutable");
    expect(a.headers.get("x-content-type-options")).toBe("nosniff");
    expect((await fetch(`${BASE}/favicon.svg`)).headers.get("content-type")).toContain("svg");
    // A missing asset and a page that does not exist both end in the app's own 404.
    expect((await fetch(`${BASE}/assets/no-such-file.js`)).status).toBe(404);
    const page = await fetch(`${BASE}/login`);
    expect(page.status).toBe(200);
    expect(page.headers.get("content-security-policy")).toContain("frame-ancestors 'none'");
    // Browsers get gzip.
    const zipped = await fetch(`${BASE}/login`, { headers: { "accept-encoding": "gzip" } });
    expect(zipped.headers.get("content-encoding")).toBe("gzip");
  });

  it("without TRUST_PROXY, a client's X-Forwarded-For is not believed: the sign-in limits count the socket's address", async () => {
    const email = `nobody-${Date.now()}@serve.test`;
    const res = await fetch(`${BASE}/login`, {
      method: "POST",
      body: new URLSearchParams({ email, password: "wrong-password" }),
      headers: { origin: BASE, "x-forwarded-for": "10.77.0.1" },
      redirect: "manual",
    });
    expect(res.status).toBe(401);
    const rows = await db.select({ ip: schema.signInFailures.ip }).from(schema.signInFailures).where(eq(schema.signInFailures.email, email));
    expect(rows.map((r) => r.ip)).toEqual(["127.0.0.1"]);
  });

  it("stops on SIGTERM", async () => {
    const exited = new Promise<number | null>((r) => server.once("exit", (code) => r(code)));
    server.kill("SIGTERM");
    expect(await Promise.race([exited, new Promise((r) => setTimeout(() => r("still running"), 8_000))])).toBe(0);
  });
});
