/**
 * Request-body limits (scripts/body-limit.mjs, in front of React Router): a body over its path's
 * limit is answered 413 before it is read, whether it says its length or not, and many of them at
 * once do not grow the server's memory.
 */
import { request } from "node:http";
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { BASE, http } from "../helpers/http";

const MiB = 1024 * 1024;
const CHUNK = Buffer.alloc(MiB, "a");

/** Resident memory of the test web server (scripts/test.sh exports its pid), in MB. */
function serverRssMb(): number {
  const pid = process.env.SERVER_PID;
  if (!pid) throw new Error("SERVER_PID is not set: run the tests with npm test");
  const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, "utf8"));
  return Number(m![1]) / 1024;
}

/**
 * POSTs `total` bytes (a form body of "a"s) in 1 MB chunks, with or without a Content-Length,
 * and answers the status the server gives; the body is written as the socket takes it, so this
 * process never holds more than a chunk. Stops writing once the answer is in.
 */
function bigPost(path: string, total: number, withLength: boolean): Promise<{ status: number; body: string; sent: number }> {
  return new Promise((resolve, reject) => {
    const url = new URL(path, BASE);
    const headers: Record<string, string | number> = { "content-type": "application/x-www-form-urlencoded", origin: BASE };
    if (withLength) headers["content-length"] = total;
    let sent = 0;
    let answered = false;
    const req = request(url, { method: "POST", headers }, (res) => {
      answered = true;
      let body = "";
      res.setEncoding("utf8");
      res.on("data", (c: string) => (body += c));
      res.on("end", () => {
        resolve({ status: res.statusCode!, body, sent });
        req.destroy();
      });
      res.on("error", () => resolve({ status: res.statusCode!, body, sent }));
    });
    req.on("error", (e) => {
      if (!answered) reject(e);
    });
    const write = () => {
      while (!answered && sent < total) {
        const n = Math.min(CHUNK.length, total - sent);
        sent += n;
        if (!req.write(n === CHUNK.length ? CHUNK : CHUNK.subarray(0, n))) return void req.once("drain", write);
      }
      if (!answered) req.end();
    };
    write();
  });
}

describe("request-body limits", () => {
  it("attack: 20 concurrent 64 MB posts to /login (with and without a length) each get 413, the server stays under 300 MB and /healthz answers throughout", async () => {
    const before = serverRssMb();
    let peak = before;
    const health: number[] = [];
    let running = true;
    const watch = (async () => {
      while (running) {
        peak = Math.max(peak, serverRssMb());
        const t = Date.now();
        const r = await fetch(`${BASE}/healthz`).catch(() => null);
        health.push(r?.status ?? 0);
        expect(Date.now() - t).toBeLessThan(5_000);
        await new Promise((r) => setTimeout(r, 50));
      }
    })();
    try {
      for (let round = 0; round < 2; round++) {
        const answers = await Promise.all(Array.from({ length: 20 }, (_, i) => bigPost("/login", 64 * MiB, i % 2 === 0)));
        for (const a of answers) {
          expect(a.status).toBe(413);
          expect(a.body).toContain("The request is too large");
        }
        // Refused before the body was read: no client got anywhere near sending all of it.
        for (const a of answers) expect(a.sent).toBeLessThan(64 * MiB);
      }
    } finally {
      running = false;
      await watch;
    }
    peak = Math.max(peak, serverRssMb());
    expect(health.length).toBeGreaterThan(0);
    expect(health.every((s) => s === 200)).toBe(true);
    expect(peak, `rss before ${before.toFixed(0)} MB`).toBeLessThan(300);
    // The server still signs people in.
    expect((await http("/login")).status).toBe(200);
  });

  it("attack: forgot-password, reset and invitation posts over 64 KB get 413; the upload routes take files up to their own limits", async () => {
    for (const path of ["/forgot-password", "/reset-password/abc", "/invite/abc", "/login.data", "/sites/x/settings"]) {
      expect((await bigPost(path, 65 * 1024, true)).status, path).toBe(413);
      expect((await bigPost(path, 65 * 1024, false)).status, path).toBe(413);
    }
    // A layout form may carry a 20 MB file; the limit there is 32 MB (without a session: sent to sign in, not 413).
    expect((await bigPost("/sites/x/layout", 22 * MiB, true)).status).not.toBe(413);
    expect((await bigPost("/sites/x/layout", 33 * MiB, true)).status).toBe(413);
    expect((await bigPost("/sites/x/layout", 33 * MiB, false)).status).toBe(413);
    expect((await bigPost("/api/v1/sites/x/findings", 6 * MiB, true)).status).toBe(413);
    // A dot path resolved by the router does not borrow another route's limit.
    expect((await bigPost("/sites/x/inspections/../../../login", 2 * MiB, true)).status).toBe(413);
    // A small form posted without a length still arrives whole.
    const r = await bigPost("/login", 100, false);
    expect(r.status).toBe(400);
  });
});
