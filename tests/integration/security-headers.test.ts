import { describe, expect, it } from "vitest";
import { http, signIn } from "../helpers/http";
import { createOrg } from "../helpers/db";

function expectHeaders(h: Headers) {
  const csp = h.get("content-security-policy") ?? "";
  expect(csp).toContain("default-src 'self'");
  expect(csp).toContain("frame-ancestors 'none'");
  expect(csp).toMatch(/connect-src 'self' http:\/\/127\.0\.0\.1:\d+/); // the local object store, for uploads
  expect(csp).not.toContain("unsafe-eval");
  expect(h.get("x-content-type-options")).toBe("nosniff");
  expect(h.get("referrer-policy")).toBe("strict-origin-when-cross-origin");
  expect(h.get("x-frame-options")).toBe("DENY");
}

describe("security headers", () => {
  it("are on documents, with a script nonce instead of unsafe-inline", async () => {
    const r = await http("/login");
    expectHeaders(r.headers);
    const csp = r.headers.get("content-security-policy")!;
    const nonce = /'nonce-([^']+)'/.exec(csp)![1]!;
    expect(csp).not.toMatch(/script-src[^;]*unsafe-inline/);
    expect(r.body).toContain(`nonce="${nonce}"`);
  });

  it("are on error pages, API answers and health checks", async () => {
    const { people, password } = await createOrg("Headers");
    const { cookie } = await signIn(people.owner.email, password);
    expectHeaders((await http("/settings", { cookie })).headers);
    expectHeaders((await http("/sites/00000000-0000-4000-8000-000000000000", { cookie })).headers);
    expectHeaders((await http("/api/v1/me")).headers);
    expectHeaders((await http("/healthz")).headers);
  });

  it("gives each document its own nonce", async () => {
    const a = (await http("/login")).headers.get("content-security-policy");
    const b = (await http("/login")).headers.get("content-security-policy");
    expect(a).not.toBe(b);
  });
});
