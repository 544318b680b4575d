/**
 * A throwaway copy of this checkout for running `npm start` / `npm test` themselves from a test:
 * the working tree's files (tracked and new, as they are now), node_modules as a symlink, the
 * test run's build copied in (so `npm start` need not build), in a private temp folder (so its
 * PostgreSQL cluster lives in /var/tmp, as db.sh does for such a clone), on ports of its own
 * derived from TEST_SLOT. Nothing of the running test suite is shared: no DATABASE_URL, no ports.
 * Processes are found and ended by their own ids (cwd or command line inside the copy or its
 * cluster), never by name.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { createHash } from "node:crypto";
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, readlinkSync, realpathSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";

const ROOT = join(import.meta.dirname, "../..");
const SLOT = Number(process.env.TEST_SLOT ?? 0) || 0;

/** Ports for copy number `k` (0–9) of this test slot, clear of the suite's own (see scripts/test.sh). */
export function checkoutPorts(k: number) {
  const n = SLOT * 10 + k;
  return { pg: 55000 + n, app: 3500 + n, s3: 4800 + n, smtp: 2800 + n, testSlot: 200 + n };
}

export interface Checkout {
  dir: string;
  /** Where its PostgreSQL cluster lives (db.sh path). */
  pgData: string;
  /** A clean environment for its scripts: PATH and HOME, nothing of the running suite. */
  env: NodeJS.ProcessEnv;
  /** Processes (other than this one) whose cwd or command line is inside the copy or its cluster. */
  processes(): { pid: number; cmd: string }[];
  /** Whether a postmaster of its cluster is alive (postmaster.pid names a live process). */
  clusterRunning(): boolean;
  /** Ends what is left (by id), stops the cluster, removes the copy and the cluster. */
  remove(): void;
}

export function tempCheckout(label: string, ports: ReturnType<typeof checkoutPorts>): Checkout {
  const dir = mkdtempSync(join(tmpdir(), `sunsift-${label}-`)); // 0700: the postgres user cannot enter
  const files = spawnSync("git", ["ls-files", "-z", "--cached", "--others", "--exclude-standard"], { cwd: ROOT, encoding: "utf8" })
    .stdout.split("\0")
    .filter(Boolean);
  for (const f of files) {
    const from = join(ROOT, f);
    if (!existsSync(from)) continue; // deleted in the working tree
    mkdirSync(dirname(join(dir, f)), { recursive: true });
    cpSync(from, join(dir, f));
  }
  symlinkSync(realpathSync(join(ROOT, "node_modules")), join(dir, "node_modules"));
  mkdirSync(join(dir, ".data"));
  writeFileSync(join(dir, ".data/npm-ci.sha"), createHash("sha256").update(readFileSync(join(dir, "package-lock.json"))).digest("hex") + "\n");
  // Copied after the sources, so it is newer than every file of app/: npm start does not rebuild.
  cpSync(join(ROOT, process.env.BUILD_DIR ?? "build"), join(dir, "build"), { recursive: true });

  const env: NodeJS.ProcessEnv = {
    PATH: process.env.PATH,
    HOME: process.env.HOME,
    LANG: "C.UTF-8",
    PGPORT: String(ports.pg),
    PORT: String(ports.app),
    S3_PORT: String(ports.s3),
    SMTP_PORT: String(ports.smtp),
    TEST_SLOT: String(ports.testSlot),
    SESSION_SECRET: "checkout-secret-checkout-secret-0123456",
    // npm must not look for its own updates (no host but this one is contacted).
    npm_config_update_notifier: "false",
    npm_config_fund: "false",
    npm_config_audit: "false",
  };
  const pgData = spawnSync("bash", ["scripts/db.sh", "path"], { cwd: dir, env, encoding: "utf8" }).stdout.trim();

  function processes() {
    const found: { pid: number; cmd: string }[] = [];
    for (const name of readdirSync("/proc")) {
      const pid = Number(name);
      if (!pid || pid === process.pid) continue;
      let cwd = "";
      let cmd = "";
      try {
        cwd = readlinkSync(`/proc/${pid}/cwd`);
      } catch {
        /* gone, or not ours to read */
      }
      try {
        cmd = readFileSync(`/proc/${pid}/cmdline`, "utf8").replaceAll("\0", " ").trim();
      } catch {
        /* gone */
      }
      const inside = (p: string) => p === dir || p.startsWith(dir + "/") || p === pgData || p.startsWith(pgData + "/");
      if (inside(cwd) || cmd.includes(dir) || cmd.includes(pgData)) found.push({ pid, cmd: cmd || `(cwd ${cwd})` });
    }
    return found;
  }

  function clusterRunning() {
    try {
      const pid = Number(readFileSync(join(pgData, "postmaster.pid"), "utf8").split("\n")[0]);
      if (!pid) return false;
      process.kill(pid, 0);
      return true;
    } catch {
      return false;
    }
  }

  function remove() {
    for (const p of processes()) {
      try {
        process.kill(p.pid, "SIGKILL");
      } catch {
        /* already gone */
      }
    }
    // A postmaster killed outright leaves postmaster.pid; pg_ctl copes, and the folder goes anyway.
    spawnSync("bash", ["scripts/db.sh", "stop"], { cwd: dir, env, timeout: 60_000 });
    rmSync(dir, { recursive: true, force: true });
    if (pgData.startsWith("/var/tmp/")) rmSync(pgData, { recursive: true, force: true });
    rmSync(`${pgData}.log`, { force: true });
  }

  return { dir, pgData, env, processes, clusterRunning, remove };
}

/** Starts `npm <script>` in its own process group (as a terminal runs it), collecting its output. */
export function runNpm(co: Checkout, args: string[], env: NodeJS.ProcessEnv = {}) {
  const child: ChildProcess = spawn("npm", args, { cwd: co.dir, env: { ...co.env, ...env }, stdio: ["ignore", "pipe", "pipe"], detached: true });
  let output = "";
  child.stdout!.on("data", (c: Buffer) => (output += c.toString()));
  child.stderr!.on("data", (c: Buffer) => (output += c.toString()));
  const exited = new Promise<number | null>((r) => child.once("exit", (code, signal) => r(code ?? (signal ? -1 : null))));
  return {
    child,
    exited,
    output: () => output,
    /** Resolves once the output contains `text`; rejects after `ms` or when the command ends first. */
    async waitFor(text: string | RegExp, ms: number) {
      const until = Date.now() + ms;
      while (Date.now() < until) {
        if (typeof text === "string" ? output.includes(text) : text.test(output)) return;
        if (child.exitCode !== null || child.signalCode !== null) throw new Error(`npm ${args.join(" ")} ended before "${text}":\n${output}`);
        await new Promise((r) => setTimeout(r, 50));
      }
      throw new Error(`npm ${args.join(" ")} did not print "${text}" within ${ms} ms:\n${output}`);
    },
    /** A signal to the whole process group, as Ctrl-C in a terminal sends it. */
    signal(sig: NodeJS.Signals) {
      try {
        process.kill(-child.pid!, sig);
      } catch {
        /* the group is gone already */
      }
    },
  };
}
