/**
 * npm run bench:load — the product under 50 concurrent connections while an import runs.
 *
 * Starts everything on its own: PostgreSQL (scripts/db.sh), the database `sunsift_bench_load`
 * (reset, migrated, demo plant seeded through the product's import paths by seeds/demo.ts), the
 * object store and SMTP fakes, a production build in `build-bench/`, then scripts/serve.mjs and
 * the job worker on loopback. This process then drives the server over loopback with autocannon:
 *
 *  1. baseline: the trivial route `/healthz` (one `select 1`), 50 connections, BENCH_TRIVIAL_S s;
 *  2. main run, BENCH_SECONDS s (default 60), 50 connections in all, started together with an
 *     import (a month of the demo plant's wide export POSTed to /api/v1/sites/:id/readings with
 *     the demo token), as separate autocannon instances so each group has its own percentiles:
 *       screens (30 conn.): site overview, flags, fly list — each connection a signed-in engineer
 *                           or lead with a session of its own;
 *       series  (15 conn.): the combiner series JSON route of flagged and other combiners, each
 *                           connection with its own session too;
 *       api      (5 conn.): flags and fly list over the Bearer API.
 *
 * vs_trivial = main run's throughput (all groups, all 50 connections) ÷ the trivial route's at 50
 * connections. errors = transport errors + timeouts + non-2xx answers, all groups and the baseline.
 * Flags: --reuse keeps an already seeded `sunsift_bench_load` (skips the ~1.5 min seed).
 * Last line: errors=<n> screens_p95_ms=<n> series_p95_ms=<n> vs_trivial=<ratio>
 */
import { execFileSync, spawn, type ChildProcess } from "node:child_process";
import { createReadStream, mkdirSync, openSync, readdirSync, statSync } from "node:fs";
import { setTimeout as sleep } from "node:timers/promises";
import type { EventEmitter } from "node:events";
import autocannon from "autocannon";
import pg from "pg";

const SECONDS = Number(process.env.BENCH_SECONDS ?? 60);
const TRIVIAL_S = Number(process.env.BENCH_TRIVIAL_S ?? 20);
const CONNECTIONS = 50;
const PORT = Number(process.env.BENCH_PORT ?? 3990);
const S3_PORT = Number(process.env.BENCH_S3_PORT ?? 4990);
const SMTP_PORT = Number(process.env.BENCH_SMTP_PORT ?? 2990);
const BASE = `http://127.0.0.1:${PORT}`;
const REUSE = process.argv.includes("--reuse");
const DEMO_TOKEN = "sunsift-demo-token";
const DEMO_PASSWORD = "sunsift-demo";

const root = new URL("..", import.meta.url).pathname;
const logDir = `${root}.data/bench-load`;
mkdirSync(logDir, { recursive: true });
const tsx = ["node_modules/tsx/dist/cli.mjs"];

execFileSync("bash", ["scripts/db.sh", "start"], { cwd: root, stdio: "inherit" });
const baseUrl = execFileSync("bash", ["scripts/db.sh", "url"], { cwd: root }).toString().trim();
const DATABASE_URL = `${baseUrl.replace(/\/[^/]*$/, "")}/sunsift_bench_load`;
const env: NodeJS.ProcessEnv = {
  ...process.env,
  NODE_ENV: "production",
  DATABASE_URL,
  SESSION_SECRET: "bench-load-secret-bench-load-secret-0123456",
  S3_PORT: String(S3_PORT),
  SMTP_PORT: String(SMTP_PORT),
  S3_ENDPOINT: `http://127.0.0.1:${S3_PORT}`,
  S3_DIR: `${root}.data/s3-bench-load`,
  APP_URL: BASE,
  PORT: String(PORT),
  HOST: "127.0.0.1",
  BUILD_DIR: "build-bench",
};

const children: ChildProcess[] = [];
function start(name: string, args: string[]): ChildProcess {
  const out = openSync(`${logDir}/${name}.log`, "w");
  const child = spawn("node", args, { cwd: root, env, stdio: ["ignore", out, out] });
  children.push(child);
  return child;
}
async function stopAll() {
  for (const c of children.reverse()) {
    if (c.exitCode !== null || c.signalCode !== null) continue;
    const exited = new Promise((r) => c.once("exit", r));
    c.kill("SIGTERM");
    await Promise.race([exited, sleep(10_000)]);
    if (c.exitCode === null && c.signalCode === null) c.kill("SIGKILL");
  }
}
process.on("SIGINT", () => void stopAll().then(() => process.exit(130)));
process.on("SIGTERM", () => void stopAll().then(() => process.exit(143)));

async function waitFor(url: string, seconds: number) {
  const until = Date.now() + seconds * 1000;
  while (Date.now() < until) {
    try {
      if ((await fetch(url)).ok) return;
    } catch {
      /* not up yet */
    }
    await sleep(200);
  }
  throw new Error(`${url} did not answer within ${seconds} s (logs in ${logDir})`);
}

const run = (args: string[]) => execFileSync("node", args, { cwd: root, stdio: "inherit", env });

try {
  const t0 = Date.now();
  if (!REUSE) run([...tsx, "scripts/reset-db.ts"]);
  else execFileSync("bash", ["scripts/db.sh", "ensure-db", "sunsift_bench_load"], { cwd: root, stdio: "inherit", env: { ...process.env } });
  run([...tsx, "scripts/migrate.ts"]);
  start("fakes", [...tsx, "scripts/fakes.ts"]);
  await sleep(1500);
  console.log("== seeding the demo plant (skipped when already loaded)");
  run([...tsx, "seeds/demo.ts", "--demo"]);
  console.log("== production build in build-bench/");
  execFileSync("node", ["node_modules/@react-router/dev/bin.js", "build"], { cwd: root, stdio: ["ignore", "ignore", "inherit"], env });
  start("worker", [...tsx, "scripts/worker.ts"]);
  start("server", ["scripts/serve.mjs", "./build-bench/server/index.js"]);
  await waitFor(`${BASE}/healthz`, 60);
  console.log(`== ready after ${((Date.now() - t0) / 1000).toFixed(0)} s`);

  // The demo site, and combiners to chart: the flagged ones first, then others.
  const client = new pg.Client({ connectionString: DATABASE_URL });
  await client.connect();
  const siteRow = await client.query<{ id: string }>(
    `select s.id from sites s join organisations o on o.id = s.org_id join api_tokens t on t.org_id = o.id where t.prefix = $1 order by s.created_at limit 1`,
    [DEMO_TOKEN.slice(0, 7)],
  );
  const siteId = siteRow.rows[0]?.id;
  if (!siteId) throw new Error("the demo site is missing");
  const comb = await client.query<{ id: number }>(
    `(select combiner_id as id from flags where site_id = $1 group by combiner_id limit 10)
     union (select id from devices where site_id = $1 and kind = 'combiner' order by id limit 10)`,
    [siteId],
  );
  await client.end();
  const combinerIds = comb.rows.map((r) => r.id);

  async function signIn(email: string): Promise<string> {
    const res = await fetch(`${BASE}/login`, {
      method: "POST",
      body: new URLSearchParams({ email, password: DEMO_PASSWORD }),
      headers: { origin: BASE },
      redirect: "manual",
    });
    const cookie = res.headers.get("set-cookie")?.split(";")[0];
    if (!cookie || cookie.endsWith("=")) throw new Error(`could not sign in as ${email} (${res.status})`);
    return cookie;
  }
  type Req = { method: "GET"; path: string; headers: Record<string, string> };
  // 50 users: each connection of the screens and series groups signs in on its own (engineers and
  // leads in turn), so each has its own session, as 45 people at their desks would.
  const people = ["engineer@sunsift.test", "lead@sunsift.test"];
  const sessions: string[] = [];
  for (let i = 0; i < 45; i++) sessions.push(await signIn(people[i % 2]!));
  const screensOf = (cookie: string, lead: boolean): Req[] => [
    { method: "GET", path: `/sites/${siteId}`, headers: { cookie } },
    { method: "GET", path: `/sites/${siteId}/flags`, headers: { cookie } },
    ...(lead ? [{ method: "GET" as const, path: `/sites/${siteId}/fly-list`, headers: { cookie } }] : []),
  ];
  const seriesOf = (cookie: string): Req[] =>
    combinerIds.map((id) => ({ method: "GET", path: `/api/v1/sites/${siteId}/combiners/${id}/series?days=30`, headers: { cookie } }));
  const screenUsers = sessions.slice(0, 30).map((cookie, i) => screensOf(cookie, i % 2 === 1));
  const seriesUsers = sessions.slice(30).map((cookie) => seriesOf(cookie));
  const bearer = { authorization: `Bearer ${DEMO_TOKEN}` };
  const api: Req[] = [
    { method: "GET", path: `/api/v1/sites/${siteId}/flags`, headers: bearer },
    { method: "GET", path: `/api/v1/sites/${siteId}/fly-list`, headers: bearer },
  ];
  // Check each request once: a redirect to sign-in or a 404 would make the figures meaningless.
  for (const r of [...screenUsers[1]!, ...seriesUsers[0]!, ...api]) {
    const res = await fetch(BASE + r.path, { headers: r.headers, redirect: "manual" });
    await res.arrayBuffer();
    if (res.status !== 200) throw new Error(`${r.path} answered ${res.status} before the run`);
  }

  interface Figures { rps: number; p50: number; p95: number; p99: number; requests: number; errors: number }
  const pct = (sorted: number[], q: number) => (sorted.length ? Math.round(sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)]!) : 0);
  /**
   * One autocannon instance; latencies taken from each response (autocannon's summary has no p95).
   * `perConnection`: connection i sends the requests of user i (its own session) in turn.
   */
  async function cannon(title: string, perConnection: Req[][], connections: number, duration: number): Promise<Figures> {
    const times: number[] = [];
    let next = 0;
    const setupClient = (client: { setRequests(r: Req[]): void }) => client.setRequests(perConnection[next++ % perConnection.length]!);
    const instance = autocannon({ title, url: BASE, connections, duration, requests: perConnection[0]!, setupClient, timeout: 10 } as autocannon.Options) as unknown as EventEmitter & PromiseLike<autocannon.Result>;
    instance.on("response", (_client: unknown, _status: number, _bytes: number, ms: number) => times.push(ms));
    const r = await instance;
    times.sort((a, b) => a - b);
    return {
      rps: r.requests.total / (r.duration || 1),
      p50: pct(times, 0.5),
      p95: pct(times, 0.95),
      p99: pct(times, 0.99),
      requests: r.requests.total,
      errors: r.errors + r.timeouts + r.non2xx,
    };
  }

  console.log(`== baseline: /healthz, ${CONNECTIONS} connections, ${TRIVIAL_S} s`);
  await cannon("warm-up", [...screenUsers, ...seriesUsers, api], 10, 3);
  const trivial = await cannon("trivial", [[{ method: "GET", path: "/healthz", headers: {} }]], CONNECTIONS, TRIVIAL_S);

  // The import: the demo plant's fullest month, as a machine client would send it.
  const plantDir = `${root}.data/demo-plant`;
  const month = readdirSync(plantDir)
    .filter((f) => /^readings-\d{4}-\d{2}\.csv$/.test(f))
    .sort((a, b) => statSync(`${plantDir}/${b}`).size - statSync(`${plantDir}/${a}`).size)[0]!;
  const file = `${plantDir}/${month}`;
  console.log(`== main run: ${CONNECTIONS} connections, ${SECONDS} s, while importing ${month} (${(statSync(file).size / 1e6).toFixed(1)} MB)`);
  const importStarted = Date.now();
  const posted = fetch(`${BASE}/api/v1/sites/${siteId}/readings?format=wide&mapping=${encodeURIComponent("Monthly SCADA export")}&filename=${month}`, {
    method: "POST",
    headers: { ...bearer, "content-type": "text/csv", "content-length": String(statSync(file).size) },
    body: createReadStream(file) as unknown as BodyInit,
    duplex: "half",
  } as RequestInit).then(async (r) => ({ status: r.status, body: (await r.json()) as { importId?: string; error?: string } }));
  const [sRes, seRes, aRes] = await Promise.all([
    cannon("screens", screenUsers, 30, SECONDS),
    cannon("series", seriesUsers, 15, SECONDS),
    cannon("api", [api], CONNECTIONS - 45, SECONDS),
  ]);
  const runEnded = Date.now();
  const post = await posted;
  let importLine = `import: POST answered ${post.status} ${JSON.stringify(post.body)}`;
  if (post.body.importId) {
    const st = (await (await fetch(`${BASE}/api/v1/imports/${post.body.importId}`, { headers: bearer })).json()) as {
      status: string; readingsLoaded: number; finishedAt: string | null; rowsRejected: number;
    };
    const done = st.finishedAt ? `, finished ${((Date.parse(st.finishedAt) - importStarted) / 1000).toFixed(0)} s after the start` : "";
    importLine = `import: ${st.status}, ${st.readingsLoaded.toLocaleString("en")} readings${done} (run lasted ${((runEnded - importStarted) / 1000).toFixed(0)} s)`;
  }
  const groups = { trivial, screens: sRes, series: seRes, api: aRes };
  const mainRps = groups.screens.rps + groups.series.rps + groups.api.rps;
  console.log("");
  console.log("group     conn     req/s     p50 ms   p95 ms   p99 ms   requests   errors");
  const conn: Record<string, number> = { trivial: CONNECTIONS, screens: 30, series: 15, api: CONNECTIONS - 45 };
  for (const [name, f] of Object.entries(groups))
    console.log(
      `${name.padEnd(9)} ${String(conn[name]).padStart(4)} ${f.rps.toFixed(1).padStart(9)} ${String(f.p50).padStart(10)} ${String(f.p95).padStart(8)} ${String(f.p99).padStart(8)} ${String(f.requests).padStart(10)} ${String(f.errors).padStart(8)}`,
    );
  console.log(`main run (screens + series + api): ${mainRps.toFixed(1)} req/s; trivial route: ${trivial.rps.toFixed(1)} req/s`);
  console.log(importLine);
  const errors = Object.values(groups).reduce((a, f) => a + f.errors, 0) + (post.status === 202 ? 0 : 1);
  const ratio = mainRps / trivial.rps;
  console.log(`targets: 0 errors, screens p95 ≤ 300 ms, series p95 ≤ 100 ms, vs_trivial ≥ 0.33`);
  await stopAll();
  console.log(`errors=${errors} screens_p95_ms=${groups.screens.p95} series_p95_ms=${groups.series.p95} vs_trivial=${ratio.toFixed(2)}`);
  process.exit(0);
} catch (e) {
  console.error("bench:load failed:", e instanceof Error ? e.message : e);
  await stopAll();
  process.exit(1);
}
