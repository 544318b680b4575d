/**
 * `npm start` and `npm test` stop everything they started when signalled, however often: a
 * terminal's Ctrl-C reaches the whole process group and npm forwards it once more, so two or three
 * signals arrive close together. Each is run in a throwaway copy of this checkout (its own
 * cluster in /var/tmp, its own ports), signalled at several stages, several times over (it is a
 * race), and afterwards no process of the copy and no postmaster of its cluster may be left.
 */
import { spawnSync } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { checkoutPorts, runNpm, tempCheckout, type Checkout } from "../helpers/checkout";

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

let co: Checkout;

beforeAll(() => {
  co = tempCheckout("signals", checkoutPorts(1));
});

afterAll(() => {
  co?.remove();
});

interface Cycle {
  /** Signal once the output shows this (a stage of the script)… */
  at: string;
  /** …and this much later. */
  after: number;
  signals: NodeJS.Signals[];
  /** Between the signals. */
  gap: number;
  env?: NodeJS.ProcessEnv;
}

/** Runs one start/signal cycle; answers what was left behind (empty when all is well). */
async function cycle(args: string[], c: Cycle, expectText?: string): Promise<string[]> {
  const run = runNpm(co, args, c.env);
  const problems: string[] = [];
  const what = `npm ${args.join(" ")} signalled ${c.signals.join("+")} ${c.after} ms after "${c.at}"`;
  try {
    await run.waitFor(c.at, 90_000);
    await sleep(c.after);
    for (const [i, s] of c.signals.entries()) {
      if (i) await sleep(c.gap);
      run.signal(s);
    }
    const ended = await Promise.race([run.exited.then(() => true), sleep(60_000).then(() => false)]);
    if (!ended) problems.push(`${what}: still running after 60 s`);
    // Whatever the script waited for is gone by now; allow the kernel a moment to reap.
    let left = co.processes();
    for (let i = 0; i < 20 && (left.length || co.clusterRunning()); i++) {
      await sleep(100);
      left = co.processes();
    }
    if (left.length) problems.push(`${what}: left running: ${left.map((p) => `${p.pid} ${p.cmd}`).join("; ")}`);
    if (co.clusterRunning()) problems.push(`${what}: its PostgreSQL cluster is still running`);
    if (expectText && !run.output().includes(expectText)) problems.push(`${what}: never printed "${expectText}"`);
    const stops = run.output().split("Stopping Sunsift").length - 1;
    if (stops > 1) problems.push(`${what}: cleaned up ${stops} times`);
  } catch (e) {
    problems.push(`${what}: ${e instanceof Error ? e.message : String(e)}`);
  } finally {
    if (problems.length) {
      // Start the next cycle clean: end what was left, by id, and stop the cluster.
      run.signal("SIGKILL");
      for (const p of co.processes()) {
        try {
          process.kill(p.pid, "SIGKILL");
        } catch {
          /* gone */
        }
      }
      spawnSync("bash", ["scripts/db.sh", "stop"], { cwd: co.dir, env: co.env, timeout: 60_000 });
      problems.push(`output:\n${run.output().slice(-1500)}`);
    }
  }
  return problems;
}

describe("stopping the scripts", () => {
  it("attack: Ctrl-C or SIGTERM, sent two or three times at any stage of `npm start`, leaves no process and no PostgreSQL running", async () => {
    const noDemo = { SUNSIFT_DEMO: "0" };
    const cycles: Cycle[] = [
      { at: "Migrating the database", after: 0, signals: ["SIGINT", "SIGINT", "SIGINT"], gap: 20, env: noDemo },
      { at: "Sunsift is running", after: 0, signals: ["SIGINT", "SIGINT"], gap: 10, env: noDemo },
      { at: "Migrating the database", after: 300, signals: ["SIGTERM", "SIGTERM"], gap: 50, env: noDemo },
      { at: "Sunsift is running", after: 100, signals: ["SIGTERM", "SIGTERM", "SIGTERM"], gap: 5, env: noDemo },
      { at: "Seeding the demo", after: 1500, signals: ["SIGINT", "SIGINT"], gap: 30 },
      { at: "Sunsift is running", after: 0, signals: ["SIGINT", "SIGTERM", "SIGINT"], gap: 0, env: noDemo },
      { at: "exec bash scripts/start.sh", after: 400, signals: ["SIGINT", "SIGINT"], gap: 100, env: noDemo },
      { at: "Sunsift is running", after: 500, signals: ["SIGINT", "SIGINT", "SIGINT"], gap: 50, env: noDemo },
    ];
    const problems: string[] = [];
    for (let round = 0; round < 2; round++) {
      for (const c of cycles) problems.push(...(await cycle(["start"], c, c.at === "exec bash scripts/start.sh" ? undefined : "Stopped.")));
    }
    expect(problems).toEqual([]);
  }, 240_000);

  it("attack: Ctrl-C or SIGTERM, sent two or three times during `npm test`'s set-up, leaves no process and no PostgreSQL running", async () => {
    const env = { SKIP_TYPECHECK: "1" };
    const cycles: Cycle[] = [
      { at: "== build", after: 0, signals: ["SIGINT", "SIGINT"], gap: 20, env },
      { at: "== build", after: 2000, signals: ["SIGTERM", "SIGTERM", "SIGTERM"], gap: 10, env },
      { at: "== build", after: 800, signals: ["SIGINT", "SIGINT", "SIGINT"], gap: 0, env },
      { at: "== build", after: 4000, signals: ["SIGTERM", "SIGINT"], gap: 50, env },
    ];
    const problems: string[] = [];
    for (const c of cycles) problems.push(...(await cycle(["test", "--", "tests/unit/csv-safe.test.ts"], c)));
    expect(problems).toEqual([]);
  }, 180_000);

  it("attack: Ctrl-C or SIGTERM while `npm test` makes its database or runs its tests (app, worker, object store and vitest up) leaves no process and no PostgreSQL running", async () => {
    // Full set-ups (each builds the app), signalled once vitest has started and while the fresh
    // test database is made.
    const env = { SKIP_TYPECHECK: "1" };
    const problems = [
      ...(await cycle(["test", "--", "tests/unit/csv-safe.test.ts"], { at: "== tests", after: 300, signals: ["SIGINT", "SIGINT"], gap: 20, env })),
      ...(await cycle(["test", "--", "tests/unit/csv-safe.test.ts"], { at: "== fresh test database", after: 400, signals: ["SIGTERM", "SIGTERM", "SIGTERM"], gap: 10, env })),
    ];
    expect(problems).toEqual([]);
  }, 180_000);
});
