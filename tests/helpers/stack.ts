import { createHash } from "node:crypto";
/**
 * A whole Sunsift of its own for the fault tests: its own PostgreSQL cluster (so restarting it
 * disturbs nobody), database, object-store fake, worker and web server, on loopback ports of
 * their own. Processes are started and killed by their own ids.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { mkdirSync, openSync, rmSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";

const ROOT = process.cwd();
const NODE = process.execPath;
const TSX = join(ROOT, "node_modules/tsx/dist/cli.mjs");

export interface StackOptions {
  pgPort: number;
  appPort: number;
  s3Port: number;
  /** Nothing listens here: the SMTP server is "down" until a test starts one. */
  smtpPort: number;
  name: string;
}

export function stack(o: StackOptions) {
  const out = join(process.env.TEST_OUTPUT ?? join(ROOT, "test-output"), o.name);
  mkdirSync(out, { recursive: true });
  // In /var/tmp, not the checkout: the postgres user may not enter a clone in a private temp folder.
  const pgData = join("/var/tmp", `sunsift-pg-${o.name}-${createHash("md5").update(ROOT).digest("hex").slice(0, 10)}`);
  const databaseUrl = `postgres://app@127.0.0.1:${o.pgPort}/sunsift_${o.name}_test`;
  const s3Dir = join(ROOT, ".data", `s3-${o.name}`);
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    NODE_ENV: "production",
    DATABASE_URL: databaseUrl,
    PORT: String(o.appPort),
    HOST: "127.0.0.1",
    TRUST_PROXY: "1", // the tests play several client addresses with X-Forwarded-For
    APP_URL: `http://127.0.0.1:${o.appPort}`,
    S3_PORT: String(o.s3Port),
    S3_ENDPOINT: `http://127.0.0.1:${o.s3Port}`,
    S3_DIR: s3Dir,
    SMTP_PORT: String(o.smtpPort),
    PGDATA: pgData,
    PGPORT: String(o.pgPort),
  };
  delete env.S3_PUBLIC_ENDPOINT;
  const procs = new Map<string, ChildProcess>();

  function run(cmd: string, args: string[], timeout = 120_000) {
    // scripts/db.sh leaves an external server (DATABASE_URL set) alone: give it none.
    const { DATABASE_URL: _external, ...clusterEnv } = env;
    const r = spawnSync(cmd, args, { cwd: ROOT, env: cmd === "bash" ? clusterEnv : env, encoding: "utf8", timeout });
    if (r.status !== 0) throw new Error(`${cmd} ${args.join(" ")} failed (${r.status}): ${r.stderr || r.stdout}`);
    return r.stdout;
  }

  const COMMANDS: Record<string, string[]> = {
    s3: [TSX, "scripts/fakes.ts", "--s3-only"],
    worker: [TSX, "scripts/worker.ts"],
    web: [join(ROOT, "scripts/serve.mjs"), `./${process.env.BUILD_DIR ?? "build"}/server/index.js`],
  };

  async function waitFor(url: string, ms = 60_000, ok = (s: number) => s < 500) {
    const until = Date.now() + ms;
    while (Date.now() < until) {
      const r = await fetch(url).catch(() => null);
      if (r && ok(r.status)) return;
      await new Promise((res) => setTimeout(res, 200));
    }
    throw new Error(`${url} did not answer within ${ms} ms`);
  }

  const api = {
    databaseUrl,
    appUrl: `http://127.0.0.1:${o.appPort}`,
    env,
    out,
    /** Cluster up, fresh database migrated, demo accounts seeded. */
    prepare() {
      run("bash", ["scripts/db.sh", "start"]);
      run(NODE, [TSX, "scripts/reset-db.ts"]);
      run(NODE, [TSX, "scripts/migrate.ts"]);
      run(NODE, [TSX, "seeds/demo.ts", "--demo", "--accounts-only"]);
      rmSync(s3Dir, { recursive: true, force: true });
    },
    start(name: "s3" | "worker" | "web") {
      const log = openSync(join(out, `${name}.log`), "a");
      // A process group of its own: tsx runs the script in a child process, and a kill must reach it.
      const child = spawn(NODE, COMMANDS[name]!, { cwd: ROOT, env, stdio: ["ignore", log, log], detached: true });
      procs.set(name, child);
      return child;
    },
    async up(names: ("s3" | "worker" | "web")[] = ["s3", "worker", "web"]) {
      for (const n of names) if (!procs.has(n)) api.start(n);
      if (names.includes("s3")) await waitFor(`http://127.0.0.1:${o.s3Port}/`, 30_000, () => true);
      if (names.includes("web")) await waitFor(`${api.appUrl}/healthz`);
    },
    /** SIGKILL (or another signal) to one process, by its own id; waits until it is gone. */
    async kill(name: string, signal: NodeJS.Signals = "SIGKILL") {
      const child = procs.get(name);
      if (!child || child.exitCode !== null || child.signalCode !== null) return;
      const gone = new Promise((r) => child.once("exit", r));
      process.kill(-child.pid!, signal);
      await gone;
      // The group's other members (tsx's child) go with it; wait until none is left.
      for (let i = 0; ; i++) {
        try {
          process.kill(-child.pid!, i === 100 ? "SIGKILL" : 0);
        } catch {
          break;
        }
        await new Promise((r) => setTimeout(r, 50));
      }
      procs.delete(name);
    },
    pg(action: "start" | "stop") {
      run("bash", ["scripts/db.sh", action]);
    },
    /** The same without blocking this process, so requests can run while the cluster stops and starts. */
    pgAsync(action: "start" | "stop"): Promise<void> {
      const { DATABASE_URL: _external, ...clusterEnv } = env;
      const child = spawn("bash", ["scripts/db.sh", action], { cwd: ROOT, env: clusterEnv, stdio: "ignore" });
      return new Promise((resolve, reject) => child.once("exit", (code) => (code === 0 ? resolve() : reject(new Error(`db.sh ${action} exited ${code}`)))));
    },
    async stop() {
      for (const name of [...procs.keys()]) await api.kill(name, "SIGTERM");
      api.pg("stop");
      // A throwaway checkout (a clone in the temp folder, as CI and the clean-clone check make)
      // takes its cluster with it; a working checkout keeps it for the next run.
      if (ROOT.startsWith(tmpdir())) for (const p of [pgData, `${pgData}.log`]) rmSync(p, { recursive: true, force: true });
    },
    waitFor,
  };
  return api;
}
