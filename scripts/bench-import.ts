/**
 * npm run bench:import — the production-export import against PostgreSQL's own bulk load.
 *
 * Generates a wide export of 1,000 combiners × 30 days × 5-minute readings (8.64 million values)
 * and the same data in long form, imports each through the product's import path (the job the
 * worker runs, reading the file from the object store fake), and times a raw `psql \copy` of
 * the same canonical rows into a table with the readings table's columns, partitions and
 * primary key (the physical reference). Starts PostgreSQL, a fresh `sunsift_bench` database and
 * the object store itself. Last line: `import_vs_copy=<ratio> rows_per_s=<n> peak_rss_mb=<n>`.
 */
import { execFile, execFileSync, execSync } from "node:child_process";
import { promisify } from "node:util";
import { createReadStream, createWriteStream, mkdirSync, rmSync, statSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { once } from "node:events";
import { eq } from "drizzle-orm";

const execFileAsync = promisify(execFile);
const ROOT = fileURLToPath(new URL("..", import.meta.url));
const COMBINERS = Number(process.env.BENCH_COMBINERS ?? 1000);
const DAYS = Number(process.env.BENCH_DAYS ?? 30);
const STEP_MS = 5 * 60_000;
const START = Date.UTC(2026, 8, 1); // 2026-09-01T00:00Z
const STEPS = (DAYS * 86_400_000) / STEP_MS;
const S3_PORT = Number(process.env.BENCH_S3_PORT ?? 4699);
const WORK = join(ROOT, ".data", "bench-import");

function sh(cmd: string): string {
  return execSync(cmd, { cwd: ROOT, encoding: "utf8", stdio: ["ignore", "pipe", "inherit"] }).trim();
}

const name = (i: number) => `CB${String(i + 1).padStart(4, "0")}`;

/** A plausible combiner current: zero at night, a daily arc, a little spread between combiners. */
function current(c: number, step: number): string {
  const minute = (step * 5) % 1440;
  const sun = Math.sin(((minute - 360) / 720) * Math.PI);
  if (sun <= 0) return "0";
  return (sun * (140 + (c % 17))).toFixed(2);
}

async function write(path: string, produce: (push: (s: string) => Promise<void>) => Promise<void>) {
  const out = createWriteStream(path);
  let buf = "";
  await produce(async (s) => {
    buf += s;
    if (buf.length > 1 << 20) {
      if (!out.write(buf)) await once(out, "drain");
      buf = "";
    }
  });
  out.write(buf);
  out.end();
  await once(out, "finish");
}

function iso(ms: number): string {
  return new Date(ms).toISOString().replace(".000Z", "Z");
}

async function main() {
  console.log(`bench:import — ${COMBINERS} combiners × ${DAYS} days × 5 min = ${(COMBINERS * STEPS).toLocaleString("en")} values`);
  sh("bash scripts/db.sh start");
  const base = sh("bash scripts/db.sh url");
  const databaseUrl = `${base.replace(/\/[^/]*$/, "")}/${process.env.BENCH_DB ?? "sunsift_bench"}`;
  Object.assign(process.env, {
    DATABASE_URL: databaseUrl,
    SESSION_SECRET: process.env.SESSION_SECRET ?? "bench-secret-bench-secret-bench-secret-00",
    S3_ENDPOINT: `http://127.0.0.1:${S3_PORT}`,
    S3_BUCKET: "sunsift-bench",
    NODE_ENV: "production",
  });
  const tsx = "node node_modules/tsx/dist/cli.mjs";
  sh(`${tsx} scripts/reset-db.ts`);
  sh(`${tsx} scripts/migrate.ts`);

  rmSync(WORK, { recursive: true, force: true });
  mkdirSync(WORK, { recursive: true });
  const { startFakes } = await import("./fakes");
  const fakes = await startFakes({ s3Port: S3_PORT, smtpPort: null, s3Dir: join(WORK, "s3"), bucket: "sunsift-bench", quiet: true });

  const { db, pool } = await import("../app/db/client.server");
  const schema = await import("../app/db/schema");
  const { siteSettingsSchema } = await import("../app/domain/site-settings");
  const { newObjectKey, putObject } = await import("../app/services/storage.server");
  const { metricCode } = await import("../app/db/unmanaged/readings");

  // An organisation, a site and its layout: 1,000 combiners under 20 inverters.
  const [org] = await db().insert(schema.organisations).values({ name: "Bench" }).returning();
  const settings = siteSettingsSchema.parse({
    name: "Bench site", latitude: 37.4, longitude: -6.2, elevation: 60, timezone: "Europe/Madrid", dcCapacityKw: 50000, acCapacityKw: 45000,
    currency: "EUR", tariffPerMwh: 55, mounting: { kind: "fixed", tilt: 30, azimuth: 180 },
    module: { pmp: 550, vmp: 41.96, imp: 13.11, voc: 49.9, isc: 13.98, alphaIsc: 0.048, betaVoc: -0.27, gammaPmp: -0.35 },
    temperatureSource: { kind: "sandia", moduleType: "glass_polymer_open_rack" },
  });
  const [site] = await db().insert(schema.sites).values({ orgId: org!.id, name: "Bench site", latitude: 37.4, longitude: -6.2, timezone: "Europe/Madrid", settings }).returning();
  const [block] = await db().insert(schema.blocks).values({ siteId: site!.id, name: "B1" }).returning();
  const inverters = await db().insert(schema.devices).values(Array.from({ length: 20 }, (_, i) => ({ siteId: site!.id, kind: "inverter" as const, name: `INV${String(i + 1).padStart(2, "0")}`, blockId: block!.id }))).returning();
  const combiners = await db()
    .insert(schema.devices)
    .values(Array.from({ length: COMBINERS }, (_, i) => ({ siteId: site!.id, kind: "combiner" as const, name: name(i), blockId: block!.id, parentId: inverters[i % 20]!.id, stringCount: 16 })))
    .returning();
  const idOf = new Map(combiners.map((c) => [c.name, c.id]));

  // The files: wide, long, and the canonical rows for the reference.
  const t0 = performance.now();
  const widePath = join(WORK, "wide.csv");
  const longPath = join(WORK, "long.csv");
  const refPath = join(WORK, "canonical.csv");
  await write(widePath, async (push) => {
    await push(`timestamp,${Array.from({ length: COMBINERS }, (_, c) => `${name(c)} DC Current [A]`).join(",")}\n`);
    for (let s = 0; s < STEPS; s++) {
      let line = iso(START + s * STEP_MS);
      for (let c = 0; c < COMBINERS; c++) line += "," + current(c, s);
      await push(line + "\n");
    }
  });
  await write(longPath, async (push) => {
    await push("timestamp,device,metric,value\n");
    for (let s = 0; s < STEPS; s++) {
      const ts = iso(START + s * STEP_MS);
      let chunk = "";
      for (let c = 0; c < COMBINERS; c++) chunk += `${ts},${name(c)},dc_current,${current(c, s)}\n`;
      await push(chunk);
    }
  });
  const dc = metricCode("dc_current");
  await write(refPath, async (push) => {
    for (let s = 0; s < STEPS; s++) {
      const ts = iso(START + s * STEP_MS);
      let chunk = "";
      for (let c = 0; c < COMBINERS; c++) chunk += `${idOf.get(name(c))},${dc},${ts},${current(c, s)}\n`;
      await push(chunk);
    }
  });
  const values = COMBINERS * STEPS;
  const mb = (p: string) => (statSync(p).size / 1024 ** 2).toFixed(0);
  console.log(`generated in ${((performance.now() - t0) / 1000).toFixed(1)} s: wide ${mb(widePath)} MB, long ${mb(longPath)} MB, canonical ${mb(refPath)} MB`);

  // The physical reference: same columns, monthly partitions and primary key as readings.
  const client = await pool().connect();
  await client.query("CREATE TABLE readings_ref (LIKE readings INCLUDING ALL) PARTITION BY RANGE (ts)");
  await client.query("CREATE TABLE readings_ref_default PARTITION OF readings_ref DEFAULT");
  for (let m = 8; m <= 9; m++) {
    const lo = new Date(Date.UTC(2026, m, 1)).toISOString();
    const hi = new Date(Date.UTC(2026, m + 1, 1)).toISOString();
    await client.query(`CREATE TABLE readings_ref_2026_${String(m + 1).padStart(2, "0")} PARTITION OF readings_ref FOR VALUES FROM ('${lo}') TO ('${hi}')`);
  }
  // The same months for readings, so neither side pays for creating partitions in the timing.
  await client.query("SELECT ensure_reading_partitions($1, $2)", [new Date(START), new Date(START + DAYS * 86_400_000)]);
  await client.query("CHECKPOINT");
  client.release();
  const psql = `${sh("ls -d /usr/lib/postgresql/*/bin | sort -V | tail -1")}/psql`;
  const r0 = performance.now();
  execFileSync(psql, [databaseUrl, "-v", "ON_ERROR_STOP=1", "-q", "-c", `\\copy readings_ref (device_id, metric, ts, value) FROM '${refPath}' WITH (FORMAT csv)`], { stdio: "inherit" });
  const copySeconds = (performance.now() - r0) / 1000;
  console.log(`psql \\copy of ${values.toLocaleString("en")} canonical rows: ${copySeconds.toFixed(2)} s (${Math.round(values / copySeconds).toLocaleString("en")} rows/s)`);

  async function importFile(path: string, label: string) {
    const key = newObjectKey(`imports/${site!.id}`, `${label}.csv`);
    await putObject(key, createReadStream(path), statSync(path).size);
    const [row] = await db()
      .insert(schema.imports)
      .values({ orgId: org!.id, siteId: site!.id, kind: "readings", status: "queued", fileName: `${label}.csv`, objectKey: key, sizeBytes: statSync(path).size })
      .returning();
    await pool().query("CHECKPOINT");
    // The importer runs in a process of its own, so its memory is measured without the
    // generator's leftovers and the object store fake that serves it the file.
    // Asynchronously: this process serves the file from the object store fake meanwhile.
    // BENCH_CPU_PROF=<dir>: a V8 CPU profile of the importer process, for chrome://inspect or a script.
    // (tsx's own CLI starts a second node process, so the profile runs node with tsx's loader instead.)
    const runner = process.env.BENCH_CPU_PROF ? ["--cpu-prof", `--cpu-prof-dir=${process.env.BENCH_CPU_PROF}`, "--import", "tsx"] : [join(ROOT, "node_modules/tsx/dist/cli.mjs")];
    const { stdout, stderr } = await execFileAsync(process.execPath, [...runner, fileURLToPath(import.meta.url), "--import", row!.id], { cwd: ROOT, encoding: "utf8", maxBuffer: 1 << 20 });
    if (process.env.BENCH_MEM_TRACE) process.stderr.write(stderr.split("\n").filter((l) => l.startsWith("mem ")).map((l) => `${label} ${l}\n`).join(""));
    const outcome = JSON.parse(stdout.trim().split("\n").pop()!) as { seconds: number; cpuSeconds: number; peakRss: number; baseRss: number; peakHeap: number; peakExternal: number };
    const seconds = outcome.seconds;
    const [done] = await db().select().from(schema.imports).where(eq(schema.imports.id, row!.id));
    if (done!.status !== "done" || done!.readingsLoaded !== values) throw new Error(`${label} import: ${done!.status}, ${done!.readingsLoaded} readings, ${done!.error ?? ""}`);
    const rss = outcome.peakRss / 1024 ** 2;
    const timings = (done!.summary as { timings?: { stageSeconds: number; mergeSeconds: number } }).timings;
    // The importer's own CPU time does not stretch when other work shares the machine, unlike the wall times.
    console.log(`${label}: parse + staging COPY ${timings?.stageSeconds} s, merge into readings ${timings?.mergeSeconds} s, importer CPU ${outcome.cpuSeconds.toFixed(1)} s, importer RSS at start ${(outcome.baseRss / 1024 ** 2).toFixed(0)} MB, peak JS heap ${(outcome.peakHeap / 1024 ** 2).toFixed(0)} MB, peak buffers ${(outcome.peakExternal / 1024 ** 2).toFixed(0)} MB`);
    console.log(`${label}: ${seconds.toFixed(2)} s end to end, ${Math.round(values / seconds).toLocaleString("en")} rows/s, ratio ${(seconds / copySeconds).toFixed(2)}, peak RSS ${rss.toFixed(0)} MB`);
    return { seconds, rss };
  }

  const wide = await importFile(widePath, "wide");
  const check = await pool().query<{ n: string; diff: string }>(
    "SELECT count(*)::text AS n, (SELECT count(*) FROM (SELECT device_id, metric, ts, value FROM readings EXCEPT SELECT device_id, metric, ts, value FROM readings_ref) d)::text AS diff FROM readings",
  );
  console.log(`readings after the wide import: ${Number(check.rows[0]!.n).toLocaleString("en")}; rows differing from the reference: ${check.rows[0]!.diff}`);
  await pool().query("TRUNCATE readings");
  const long = await importFile(longPath, "long");

  const worst = wide.seconds >= long.seconds ? wide : long;
  const ratio = worst.seconds / copySeconds;
  const peakMb = Math.max(wide.rss, long.rss);
  console.log(`targets: ratio ≤ 1.5 (${ratio <= 1.5 ? "met" : "missed"}), peak RSS ≤ 300 MB (${peakMb <= 300 ? "met" : "missed"}); figures below are the slower of the two layouts`);
  await fakes.close();
  await pool().end();
  rmSync(WORK, { recursive: true, force: true });
  console.log(`import_vs_copy=${ratio.toFixed(2)} rows_per_s=${Math.round(values / worst.seconds)} peak_rss_mb=${Math.round(peakMb)}`);
}

/** Child mode: run one import in this process and report its time and peak memory as JSON. */
async function importOnly(importId: string) {
  const { runImport } = await import("../app/jobs/import-readings.server");
  const { pool } = await import("../app/db/client.server");
  const baseRss = process.memoryUsage().rss;
  let peakRss = baseRss;
  let peakHeap = 0;
  let peakExternal = 0;
  const sampler = setInterval(() => {
    const m = process.memoryUsage();
    peakRss = Math.max(peakRss, m.rss);
    peakHeap = Math.max(peakHeap, m.heapUsed);
    peakExternal = Math.max(peakExternal, m.external);
  }, 20);
  // BENCH_MEM_TRACE=1: the importer's memory every 2 s on stderr, to see which part grows.
  const trace = process.env.BENCH_MEM_TRACE
    ? setInterval(() => {
        const m = process.memoryUsage();
        const f = (n: number) => (n / 1024 ** 2).toFixed(0);
        process.stderr.write(`mem rss=${f(m.rss)} heap=${f(m.heapUsed)} external=${f(m.external)} arrayBuffers=${f(m.arrayBuffers)}\n`);
      }, 2000)
    : null;
  const s0 = performance.now();
  const c0 = process.cpuUsage();
  await runImport(importId);
  const seconds = (performance.now() - s0) / 1000;
  const c1 = process.cpuUsage(c0);
  const cpuSeconds = (c1.user + c1.system) / 1e6;
  clearInterval(sampler);
  if (trace) clearInterval(trace);
  peakRss = Math.max(peakRss, process.memoryUsage().rss);
  await pool().end();
  console.log(JSON.stringify({ seconds, cpuSeconds, peakRss, baseRss, peakHeap, peakExternal }));
}

const child = process.argv.indexOf("--import");
(child > 0 ? importOnly(process.argv[child + 1]!) : main()).then(
  () => process.exit(0),
  (e: unknown) => {
    console.error("bench:import failed:", e instanceof Error ? e.stack ?? e.message : e);
    process.exit(1);
  },
);
