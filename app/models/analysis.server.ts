/**
 * The analysis run: irradiance-normalised output index per combiner and interval, peer scores,
 * daily results per combiner (combiner_days) and the flags that stand on them.
 *
 * Where the work happens: the site-wide conditions (one met row per timestamp, ~288 a day) are
 * pulled into Node, where the sun position and the interval rules of app/domain/filters.ts run.
 * Everything per combiner (millions of readings) stays in PostgreSQL: units of one day and one
 * part of the plant, each a transaction of temporary tables, run on ANALYSIS_CONNECTIONS
 * connections at once (default 2); percentile_cont for medians and MAD; one row per combiner and
 * day comes back.
 *
 * Expected current (documented choice): I_exp = N · Imp_STC · G/1000 · (1 + α (Tc − 25)) with
 * α = αIsc %/°C ÷ 100 — the datasheet rarely gives αImp, and SAND2004-3535 (King, Boyson &
 * Kratochvil 2004) models current with αIsc; the same α for every combiner cancels in the peer
 * comparison anyway, so it only shifts the absolute output index by < 1 % at ±20 °C.
 */
import { createHash } from "node:crypto";
import type pg from "pg";
import { and, desc, eq } from "drizzle-orm";
import { db, pool } from "~/db/client.server";
import { analysisRuns, sites, type Site } from "~/db/schema";
import { metricCode } from "~/db/unmanaged/readings";
import { SANDIA_MODULE_TYPES } from "~/domain/temperature";
import type { SiteSettings } from "~/domain/site-settings";
import { sunPosition, solarNoonUtc } from "~/domain/sun";
import {
  ambientTempOutOfRange,
  combineReasons,
  lowPoaMask,
  lowSunMask,
  moduleTempOutOfRange,
  poaOutOfRange,
  rampMask,
  staleMask,
  type ExclusionReason,
} from "~/domain/filters";
import { auditTimestamps, observedSolarNoon, type AuditResult } from "~/domain/timestamp-audit";
import { median } from "~/domain/outliers";
import { DAY_CLASS_RULE, dayLossClasses } from "~/domain/flags";
import { updateFlags } from "./flags.server";
import { plantParts } from "~/domain/plant-parts";

const M = {
  current: metricCode("dc_current"),
  voltage: metricCode("dc_voltage"),
  power: metricCode("dc_power"),
  ac: metricCode("ac_power"),
  poa: metricCode("poa_irradiance"),
  amb: metricCode("ambient_temperature"),
  tmod: metricCode("module_temperature"),
  wind: metricCode("wind_speed"),
};
// A combiner interval's reason code within a unit: 0 scored; 1–2 site conditions under which the
// data is still usable (energy, chart band) but not scored; 3–5 the combiner's own exclusions.
// `usable` is therefore rc <= RC.ramp.
const RC = { valid: 0, low_poa: 1, ramp: 2, out_of_range: 3, clipping: 4, stale: 5 } as const;

/**
 * Cell temperature as an SQL expression over columns named poa, amb, wind, tmod.
 * Sandia (SAND2004-3535): Tm = E·exp(a + b·WS) + Ta, Tc = Tm + E/1000·ΔT; sensor: Tc = Tmod + E/1000·offset.
 * Numbers are inlined from the validated settings (never user text), so the fragment is safe.
 */
export function cellTempSql(source: SiteSettings["temperatureSource"]): string {
  const n = (x: number) => {
    if (!Number.isFinite(x)) throw new Error("non-finite coefficient");
    return `(${x})::float8`;
  };
  if (source.kind === "sensor") return `(tmod + poa / 1000.0 * ${n(source.backOffsetC)})`;
  const { a, b, deltaT } = SANDIA_MODULE_TYPES[source.moduleType];
  return `(poa * exp(${n(a)} + ${n(b)} * coalesce(wind, 0)) + amb + poa / 1000.0 * ${n(deltaT)})`;
}

export interface AnalysisOptions {
  fromDay?: string;
  toDay?: string;
  trigger: "import" | "manual" | "api" | "seed";
  runId?: string;
  jobId?: string;
}

export interface AnalysisStats {
  days: number;
  fromDay: string;
  toDay: string;
  combiners: number;
  intervals: number;
  /** site-wide intervals removed, by rule */
  siteExcluded: Record<string, number>;
  /** combiner intervals removed (or marked), by rule */
  combinerExcluded: Record<string, number>;
  timestampAudit: (AuditResult & { days: { day: string; shiftMin: number | null }[] }) | null;
  flags: { open: number; created: number; closed: number };
  seconds: Record<string, number>;
}

type Q = pg.PoolClient;

/** Memory per sort/hash of the run (PostgreSQL work_mem); a setting of the process, not of users. */
/** Connections a run uses at once (units of one day and one part of the plant in parallel). */
const ANALYSIS_CONNECTIONS = Math.max(1, Math.min(8, Number(process.env.ANALYSIS_CONNECTIONS) || 2));
const ANALYSIS_WORK_MEM = /^\d+(kB|MB|GB)$/.test(process.env.ANALYSIS_WORK_MEM ?? "") ? process.env.ANALYSIS_WORK_MEM! : "256MB";

async function localDayRange(c: Q, site: Site, metIds: number[]): Promise<{ from: string; to: string } | null> {
  const r = await c.query<{ lo: string | null; hi: string | null }>(
    `select (min(ts) at time zone $2)::date::text lo, (max(ts) at time zone $2)::date::text hi
       from readings where device_id = any($1::int[]) and metric = $3`,
    [metIds, site.timezone, M.poa],
  );
  const row = r.rows[0];
  return row?.lo && row.hi ? { from: row.lo, to: row.hi } : null;
}

function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return d.toISOString().slice(0, 10);
}

/** Create a queued run row (the job updates it); returns its id. */
export async function createRun(siteId: string, o: { fromDay?: string; toDay?: string; trigger: AnalysisOptions["trigger"] }) {
  const [run] = await db()
    .insert(analysisRuns)
    .values({ siteId, status: "queued", trigger: o.trigger, fromDay: o.fromDay ?? null, toDay: o.toDay ?? null })
    .returning({ id: analysisRuns.id });
  return run!.id;
}

export async function getRun(siteId: string, runId: string) {
  const [run] = await db().select().from(analysisRuns).where(and(eq(analysisRuns.siteId, siteId), eq(analysisRuns.id, runId))).limit(1);
  return run ?? null;
}

export async function latestRun(siteId: string, status?: "done") {
  const where = status ? and(eq(analysisRuns.siteId, siteId), eq(analysisRuns.status, status)) : eq(analysisRuns.siteId, siteId);
  const [run] = await db().select().from(analysisRuns).where(where).orderBy(desc(analysisRuns.createdAt)).limit(1);
  return run ?? null;
}

/** Run the analysis for a site over [fromDay, toDay] (site-local days; default: all its data). */
export async function runAnalysis(siteId: string, opts: AnalysisOptions): Promise<{ runId: string; stats: AnalysisStats | null }> {
  const runId = opts.runId ?? (await createRun(siteId, opts));
  // (the job id, when the queue set it, stays: queueAnalysis asks the queue whether the job still lives)
  await db().update(analysisRuns).set({ status: "running", ...(opts.jobId ? { jobId: opts.jobId } : {}) }).where(eq(analysisRuns.id, runId));
  try {
    const stats = await analyse(siteId, opts);
    await db()
      .update(analysisRuns)
      .set({ status: "done", stats: stats as never, fromDay: stats?.fromDay ?? null, toDay: stats?.toDay ?? null, finishedAt: new Date() })
      .where(eq(analysisRuns.id, runId));
    return { runId, stats };
  } catch (e) {
    const reason = e instanceof Error ? e.message : String(e);
    // The reason stays in the run's row and the log; screens and the API show runFailure() instead.
    console.warn(`analysis run ${runId} failed (ref ${runRef(runId)}): ${reason}`);
    await db().update(analysisRuns).set({ status: "failed", error: reason, finishedAt: new Date() }).where(eq(analysisRuns.id, runId));
    throw e;
  }
}

/** The short reference of a run, as the log names it beside the reason it failed. */
export function runRef(runId: string): string {
  return runId.replaceAll("-", "").slice(0, 8);
}

/**
 * What a failed run says to people: plain words and the reference under which the log and the
 * run's row keep the reason (a database error's text is not for every screen).
 */
export function runFailure(run: { id: string; status: string; error: string | null }): string | null {
  return run.status === "failed" ? `The analysis could not finish (ref ${runRef(run.id)}). Try again; if it fails again, give your administrator this reference.` : null;
}

interface DeviceRow {
  id: number;
  kind: "inverter" | "combiner" | "met";
  parent_id: number | null;
  block_id: number | null;
  string_count: number | null;
  modules: number | null;
}

async function analyse(siteId: string, opts: AnalysisOptions): Promise<AnalysisStats | null> {
  const t0 = Date.now();
  const seconds: Record<string, number> = {};
  // Time per step, summed over the days of the run.
  const lap = (k: string, since: number) => (seconds[k] = Math.round((seconds[k] ?? 0) * 1000 + Date.now() - since) / 1000);
  const [site] = await db().select().from(sites).where(eq(sites.id, siteId)).limit(1);
  if (!site) throw new Error("No such site");
  const s = site.settings;
  const th = s.thresholds;
  const c = await pool().connect();
  // Worker connections being set up (step 2), and those a worker took (it releases them itself).
  let warm: Promise<Q>[] = [];
  const taken = new Set<number>();
  try {
    const dev = await c.query<DeviceRow>(
      `select d.id, d.kind, d.parent_id, d.block_id, d.string_count,
              (select percentile_disc(0.5) within group (order by st.modules) from strings st where st.combiner_id = d.id) modules
         from devices d where d.site_id = $1`,
      [siteId],
    );
    const met = dev.rows.filter((d) => d.kind === "met").map((d) => d.id);
    const combiners = dev.rows.filter((d) => d.kind === "combiner" && (d.string_count ?? 0) > 0);
    const inverters = dev.rows.filter((d) => d.kind === "inverter").map((d) => d.id);
    if (!met.length || !combiners.length) return null;

    let range = opts.fromDay && opts.toDay ? { from: opts.fromDay, to: opts.toDay } : await localDayRange(c, site, met);
    if (!range) return null;
    if (opts.fromDay && !opts.toDay) range = { from: opts.fromDay, to: range.to };

    // One run per site at a time (seeds and tests call this directly, besides the job queue).
    await c.query("select pg_advisory_lock(hashtext('analysis:' || $1))", [siteId]);
    await c.query("begin");
    // JIT compilation costs more than it saves on these short statements (hundreds of ms each).
    await c.query("set local jit = off");
    // The run sorts and hashes a few million rows: in memory, not in temporary files (4 MB default).
    await c.query(`set local work_mem = '${ANALYSIS_WORK_MEM}'`);
    // With peer groups by inverter (the default) a group is one inverter: the combiner rows carry no
    // inverter column and join the peer rows by group alone.
    const byInverter = th.peerGroup === "inverter";
    const groupOf = (d: DeviceRow) =>
      th.peerGroup === "block" ? (d.block_id ?? -1) : th.peerGroup === "string_count" ? (d.string_count ?? 0) : (d.parent_id ?? -d.id);
    const vFallback = (d: DeviceRow) => (d.modules ? d.modules * s.module.vmp : null);
    // The worker connections (step 2) are set up while this one computes the site conditions:
    // their settings and the tables that do not depend on the conditions.
    const setUpWorker = async (): Promise<Q> => {
      const w = await pool().connect();
      try {
        // Session settings and temporary tables of this run, cleared (discard temp, reset all)
        // before the connection goes back to the pool: a warm backend is much cheaper for the next
        // run (a one-day run after an import) than a new one, whose first statements fill its
        // caches. Its prepared unit statements stay (see statementName).
        // JIT compilation costs more than it saves on these short statements (hundreds of ms each).
        // The sorts and hashes stay in memory (4 MB default). Hash joins only: the per-unit
        // tables are small and not analysed, and a nested loop over an empty clipping table
        // costs a scan per row.
        // A unit's commit need not wait for its WAL flush: the run is marked done afterwards by a
        // commit that does wait, and that flush covers every unit before it. A database crash
        // before then can lose whole units (never part of one), and the run is not marked done.
        await w.query(`set jit = off; set work_mem = '${ANALYSIS_WORK_MEM}'; set enable_nestloop = off; set enable_mergejoin = off; set synchronous_commit = off`);
        await w.query(
          `create temp table _cmb as
             select * from unnest($1::int[], $2::int[], $3::int[], $4::int[], $5::float8[]) as c(dev, grp, n, inv, vfb)`,
          [combiners.map((d) => d.id), combiners.map(groupOf), combiners.map((d) => d.string_count), combiners.map((d) => d.parent_id), combiners.map(vFallback)],
        );
        // A unit's clipped intervals and stale runs (emptied at each unit's start): tables of the
        // connection rather than of each unit, as creating and dropping a table costs more
        // (~3 ms) than the unit's few rows, and the prepared unit statement keeps its plan.
        await w.query(`create temp table _clip (inv int, ts timestamptz); create temp table _stale (dev int, a timestamptz, b timestamptz)`);
        return w;
      } catch (e) {
        await releaseWorker(w);
        throw e;
      }
    };
    warm = Array.from({ length: ANALYSIS_CONNECTIONS }, () => {
      const ready = setUpWorker();
      ready.catch(() => undefined); // (awaited, and its error reported, by the worker that takes it)
      return ready;
    });
    const bounds = await c.query<{ lo: Date; hi: Date }>(
      `select ($1::date::timestamp at time zone $3) lo, (($2::date + 1)::timestamp at time zone $3) hi`,
      [range.from, range.to, site.timezone],
    );
    const { lo, hi } = bounds.rows[0]!;

    // 1. Site-wide conditions per timestamp (small): met pivot and cell temperature in SQL.
    let t = Date.now();
    const env = await c.query<{ ts: Date; poa: number | null; amb: number | null; tmod: number | null; tcell: number | null; day: string }>(
      `select ts, poa, amb, tmod, ${cellTempSql(s.temperatureSource)} tcell, (ts at time zone $5)::date::text as day from (
         select ts, avg(value) filter (where metric = $4) poa, avg(value) filter (where metric = ${M.amb}) amb,
                avg(value) filter (where metric = ${M.wind}) wind, avg(value) filter (where metric = ${M.tmod}) tmod
           from readings where device_id = any($1::int[]) and ts >= $2 and ts < $3 group by ts) m
       order by ts`,
      [met, lo, hi, M.poa, site.timezone],
    );
    const rows = env.rows;
    if (!rows.length) {
      await c.query("rollback");
      return null;
    }
    const steps: number[] = [];
    for (let i = 1; i < Math.min(rows.length, 500); i++) steps.push((rows[i]!.ts.getTime() - rows[i - 1]!.ts.getTime()) / 60_000);
    const intervalMin = steps.length ? median(steps) : 5;
    const half = (s.dataConvention === "end" ? -1 : 1) * intervalMin * 30_000;
    // Sun at the interval midpoint (rdtools issue #243: evaluate over the interval, not at its label).
    const elev = rows.map((r) => sunPosition(new Date(r.ts.getTime() + half), s.latitude, s.longitude, { elevationM: s.elevation }).apparentElevation);
    const poa = rows.map((r) => r.poa);
    const daytime = elev.map((e) => e > 0);
    const reasons = combineReasons(rows.length, [
      { reason: "low_sun", mask: lowSunMask(elev, th.minSunElevation) },
      { reason: "gap", mask: poa.map((g) => g == null) },
      {
        reason: "out_of_range",
        mask: poaOutOfRange(poa).map((x, i) => x || moduleTempOutOfRange([rows[i]!.tmod])[0]! || ambientTempOutOfRange([rows[i]!.amb])[0]!),
      },
      { reason: "stale", mask: staleMask(poa, { intervalMinutes: intervalMin, daytime }) },
      { reason: "low_poa", mask: lowPoaMask(poa, th.minPoa) },
      { reason: "ramp", mask: rampMask(poa, { intervalMinutes: intervalMin }) },
    ]);
    const siteExcluded: Record<string, number> = {};
    const primary = reasons.map((r) => r[0] ?? null);
    for (const r of primary) if (r && r !== "low_sun") siteExcluded[r] = (siteExcluded[r] ?? 0) + 1;
    const keep = rows.map((_, i) => elev[i]! > 0);
    // The analysed intervals (daytime, the sun above the threshold), which the units below take
    // from this list (as JSON) rather than from analysis_intervals: that table is written on this
    // connection while the units already run. A JSON number is the shortest text that reads back
    // as the same float8, so the units see exactly the values stored.
    const analysed = rows.flatMap((r, i) =>
      keep[i] && elev[i]! >= th.minSunElevation ? [{ ts: r.ts, poa: r.poa, tc: r.tcell, day: r.day, reason: primary[i] ?? null }] : [],
    );
    // first/last: the day's analysed intervals, the only readings the combiner steps join.
    const dayList: { day: string; first: Date; last: Date }[] = [];
    for (const e of analysed) {
      const d = dayList.at(-1);
      if (d?.day === e.day) d.last = e.ts;
      else dayList.push({ day: e.day, first: e.ts, last: e.ts });
    }
    const envJson = JSON.stringify(analysed);
    lap("conditions", t);

    // 2. Combiner intervals: current, expected current, output index, reason.
    const alpha = s.module.alphaIsc / 100;
    const beta = s.module.betaVoc / 100;
    const dtH = intervalMin / 60;
    // The site-wide conditions are stored on this connection while the units run on the others
    // (they do not read them back): replaced over the run's days, with the peer rows of groups
    // that no longer exist (the peer grouping setting changed; the units replace those of today's
    // groups), and committed.
    let failure: unknown = null;
    const conditionsStored = (async () => {
      const t = Date.now();
      await c.query(`delete from analysis_intervals where site_id = $1 and ts >= $2 and ts < $3`, [siteId, lo, hi]);
      await c.query(
        `insert into analysis_intervals (site_id, ts, poa, cell_temp, sun_elevation, reason)
         select $1, * from unnest($2::timestamptz[], $3::float8[], $4::float8[], $5::float8[], $6::text[])`,
        [
          siteId,
          rows.filter((_, i) => keep[i]).map((r) => r.ts),
          rows.filter((_, i) => keep[i]).map((r) => r.poa),
          rows.filter((_, i) => keep[i]).map((r) => r.tcell),
          elev.filter((_, i) => keep[i]),
          primary.filter((_, i) => keep[i]),
        ],
      );
      await c.query(`delete from peer_days where site_id = $1 and day between $2 and $3 and group_key <> all($4::int[])`, [siteId, range.from, range.to, [...new Set(combiners.map(groupOf))]]);
      await c.query("commit");
      lap("conditions", t);
    })().catch((e: unknown) => {
      failure ??= e;
    });
    const win = Math.max(3, Math.round(45 / intervalMin));
    const staleMin = 45;
    const dailyRows: DayRow[] = [];
    // Each day's combiner rows as the units wrote them (with their provisional loss class), for the
    // day's classes once its last part is done.
    const dayRows = new Map<string, DayRow[]>(dayList.map((d) => [d.day, []]));
    const blockOf = new Map(combiners.map((x) => [x.id, x.block_id]));

    // Every rule below stays within one site-local day and one part of the plant: clipping windows
    // are per inverter and day, stale runs are daytime runs (the night breaks them), peers are per
    // group and interval, results per combiner and day. So the run is cut into units of one day
    // and one part (combiners that share a peer group or an inverter stay together), each in its
    // own transaction, and ANALYSIS_CONNECTIONS connections take units in turn: each unit's sorts
    // and hashes are small and stay in memory, its readings come through the primary key, and
    // re-analysing one new day still uses every connection. A run that fails part-way leaves each
    // unit either as it was or fully replaced; the run is marked failed.
    const parts = plantParts(combiners, groupOf, ANALYSIS_CONNECTIONS);
    // The last day goes in twice as many, smaller parts, so the connections end within a smaller
    // unit of each other (the one still busy leaves the others idle).
    const lastParts = ANALYSIS_CONNECTIONS > 1 ? plantParts(combiners, groupOf, 2 * ANALYSIS_CONNECTIONS) : parts;
    const partsOf = (i: number) => (i === dayList.length - 1 ? lastParts : parts);
    const units = dayList.flatMap((d, i) => partsOf(i).map((p) => ({ d, ...p })));
    let nextUnit = 0;
    // Parts not yet done per day: the worker that finishes a day's last part fills its whole-day
    // gaps and sets its loss classes, while the other goes on with the next day.
    const partsLeft = new Map(dayList.map((d, i) => [d.day, partsOf(i).length]));
    const worker = async (k: number) => {
      let w: Q | null = null;
      try {
        // A worker that cannot connect or set up fails the run like any other error, after the
        // others stop.
        taken.add(k);
        w = await warm[k]!;
        await w.query(
          `create temp table _env as
             select ts, poa, coalesce(tc, 25) tc, day, reason,
                    (case when reason is null then ${RC.valid} when reason = 'low_poa' then ${RC.low_poa} when reason = 'ramp' then ${RC.ramp} end)::int2 rc
               from json_to_recordset($1::json) as e(ts timestamptz, poa float8, tc float8, day date, reason text)`,
          [envJson],
        );
        await w.query(`analyze _env; analyze _cmb`);
        while (failure === null && nextUnit < units.length) {
          const u = units[nextUnit++]!;
          const d = u.d;
          let t = Date.now();
          await w.query("begin; delete from _clip; delete from _stale");
          await w.query(`delete from peer_days where site_id = $1 and group_key = any($2::int[]) and day = $3`, [siteId, u.groups, d.day]);
          await w.query(`delete from combiner_currents where site_id = $1 and day = $2 and combiner_id = any($3::int[])`, [siteId, d.day, u.ids]);
          lap("conditions", t);
        t = Date.now();
        // Clipping at the inverter, after the rdtools logic filter (Perry, Muller & Anderson, IEEE PVSC
        // 2021): windows of ≥ 45 min whose AC power ranges < 0.2 % above 10 % of the day's maximum give
        // the clipping level; every interval within 0.25 % of it is clipped; the combiners inherit.
        // Small (inverters only, the day's analysed intervals): computed first so the combiner pass
        // below joins it once, and only when some interval was clipped.
        // The windows (`w`) run only for inverters that can hold a flat window at all (`k`): in a
        // window of $4 + 1 positive values whose range is < 0.2 % of its mid-value, each of the $4
        // steps is < 0.2004 % of the larger of its two values, so such an inverter has a run of $4
        // steps under 0.25 % (`run` numbers the runs: it counts the steps of 0.25 % or more so
        // far, so the steps of one run share it); a window with a negative value is not covered by that, so an inverter
        // with one is kept too. Most inverter-days have no such run (a clear day's noon stays that
        // flat for a few steps), and one ordered pass finds it.
        const clipText = `insert into _clip
           with p as materialized (select device_id inv, ts, value::float8 p
                        from readings where device_id = any($1::int[]) and metric = ${M.ac} and ts >= $2 and ts <= $3),
           s as (select inv, flat, p < 0 neg, sum(case when flat then 0 else 1 end) over (partition by inv order by ts rows unbounded preceding) run
                   from (select inv, ts, p, coalesce(abs(p - q) < 0.0025 * greatest(p, q) and least(p, q) > 0, false) flat
                           from (select inv, ts, p, lag(p) over (partition by inv order by ts) q from p) l) f),
           k as (select distinct inv from s group by inv, run having count(*) filter (where flat) >= $4::int or bool_or(neg)),
           w as (select inv, ts, p, max(p) over (partition by inv) daymax,
                        count(*) over f cnt, max(p) over f hi, min(p) over f lo
                   from p where inv in (select inv from k)
                 window f as (partition by inv order by ts rows between current row and $4::int following)),
           c as (select inv, ts, p, daymax,
                        max(case when cnt = $4::int + 1 and p >= 0.1 * daymax and hi > 0 and (hi - lo) / ((hi + lo) / 2) < 0.002 then p end)
                          over (partition by inv) cmax
                   from w)
           select inv, ts from c where p >= cmax * 0.9975 and p > 0.1 * daymax`;
        const clip = await w.query({ name: statementName(clipText), text: clipText }, [u.inverters, d.first, d.last, win - 1]);
        const clipped = (clip.rowCount ?? 0) > 0;
        lap("clipping", t);

        // The combiner rows of the unit: the site conditions, the combiner's constants and the
        // expected current joined (small hash tables), the output index and the rules that need
        // one row only. Each row's reason is a small code (see RC): 0 scored, 1–2 site conditions
        // that still leave the data usable, 3–5 the combiner's own exclusions. (Comparing codes
        // rather than text is cheaper in the steps below, which test it on every row.)
        const combinerRows = (ids: string, first: string, last: string, imp: string, alphaP: string) =>
          `select x.dev, x.grp, ${byInverter ? "" : "x.inv, "}x.ts, x.cur, x.iexp,
                  case when x.iexp > 0 then x.cur / x.iexp end oi,
                  case
                    when x.cur < -0.5 or x.cur > 1.5 * x.iexp + 0.5 then ${RC.out_of_range}
                    ${clipped ? `when (x.inv, x.ts) in (select inv, ts from _clip) then ${RC.clipping}` : ""}
                    else x.rc end::int2 rc
             from (select r.device_id dev, r.ts, r.value::float8 cur, c.grp, c.inv, e.rc,
                          c.n * ${imp}::float8 * e.poa / 1000.0 * (1 + ${alphaP}::float8 * (e.tc - 25)) iexp
                     from readings r join _env e on e.ts = r.ts join _cmb c on c.dev = r.device_id
                    where r.device_id = any(${ids}::int[]) and r.metric = ${M.current} and r.ts >= ${first} and r.ts <= ${last}
                      and e.poa > 0 and e.rc is not null) x`;

        // One statement does the rest of the unit, from the combiner rows (`x`, read once and kept
        // in memory for the steps below):
        //
        // 3. Peer statistics per group and interval (`ps`). "valid": scored (no rule fired);
        // "usable": data trustworthy (low POA / ramps allowed) — used for the energy sum and the
        // chart band. MAD = median |OI − median| from the group's valid values, in the same pass;
        // MAD = 0 is handled explicitly: the robust z is left undefined (null) for that interval
        // ("skip", NIST/SEMATECH §1.3.5.17 defines M only for MAD > 0). The site rules (low POA,
        // ramps) hold for every combiner of an interval, so an interval's valid values are either
        // all its usable ones or none: the median of the valid values is the usable median where
        // there are any. With them, keyed by group, inverter and interval (`pv`), the string
        // voltage per inverter interval: dc_voltage, else dc_power ÷ dc_current, else dc_power ÷
        // Σ combiner current (with peer groups by inverter, the default, the peer statistics carry
        // that sum). The voltage only matters where there are peer statistics (the energy lost is
        // measured against the peer median). `lead` marks one row per group and interval, for
        // `peer_days`: one row per group for the day, the intervals with usable members, as
        // parallel arrays.
        //
        // 4. Per combiner per local day (`d`): medians over valid intervals, lost energy over usable
        // ones. The first pass also stores the day's combiner currents for the combiner chart: the
        // combiner rows (the analysed intervals with trustworthy site conditions), as parallel
        // arrays in any order (the chart reads them back pairwise), and an empty row for a combiner
        // without readings that day, so a stored window is known to be complete. It also names the
        // combiners that may hold a stale run (below): a non-zero value repeated at least
        // `minRows` times in the day.
        const stepMin = Math.max(1, Math.round(intervalMin));
        const minRows = Math.max(2, Math.ceil((staleMin - stepMin) / (2 * stepMin)) + 1);
        // $1 site, $2 day, $3 combiner ids, $4/$5 the day's first and last analysed interval,
        // $6 inverter ids, then $7 minRows (first pass only) and the `source`'s own parameters.
        const unit = (source: string, first: boolean) =>
          `with x as materialized (${source}),
           ps as (
             select p.grp, p.ts, case when p.nv > 0 then p.q[2] end med, p.mean, p.sd, p.nv, p.q[1] q25, p.q[2] q50, p.q[3] q75, p.nu, p.sc,
                    -- (only where a robust z will be computed: three valid members at least; unnest in the
                    -- select list, not in from, where each call would first copy the values into a tuplestore)
                    case when p.nv >= 3 then (select percentile_cont(0.5) within group (order by abs(v - p.q[2])) from (select unnest(p.vals) v) u) end mad
               from (select grp, ts,
                            avg(oi) filter (where rc = ${RC.valid}) mean, stddev_samp(oi) filter (where rc = ${RC.valid}) sd,
                            count(*) filter (where rc = ${RC.valid}) nv,
                            percentile_cont(array[0.25, 0.5, 0.75]) within group (order by oi) filter (where rc <= ${RC.ramp}) q,
                            count(*) filter (where rc <= ${RC.ramp}) nu,
                            array_agg(oi) filter (where rc = ${RC.valid}) vals, sum(cur) sc
                       from x where oi is not null
                      group by ts, grp) p), -- (time first: the rows come in time order, so the sort finds them nearly sorted)
           iv as (select device_id inv, ts, avg(value) filter (where metric = ${M.voltage}) v,
                         avg(value) filter (where metric = ${M.power}) p, avg(value) filter (where metric = ${M.current}) i
                    from readings where device_id = any($6::int[]) and metric in (${M.voltage}, ${M.power}, ${M.current})
                     and ts >= $4 and ts <= $5 group by device_id, ts),
           sc as (${byInverter ? "select grp inv, ts, sc si from ps" : "select inv, ts, sum(cur) si from x group by inv, ts"}),
           vdc as (select iv.inv, iv.ts, coalesce(iv.v, case when iv.i > 1 then iv.p / iv.i end, case when sc.si > 1 then iv.p / sc.si end) v
                     from iv left join sc using (inv, ts)),
           gi as (select grp, inv, inv = min(inv) over (partition by grp) lead
                    from (select distinct grp, coalesce(inv, -1) inv from _cmb where dev = any($3::int[])) g),
           pv as materialized (
             select ps.grp, gi.inv, gi.lead, ps.ts, ps.med, ps.mean, ps.sd, ps.nv, ps.q25, ps.q50, ps.q75, ps.nu, ps.mad, v.v, e.tc
               from ps join gi using (grp) left join vdc v on v.inv = gi.inv and v.ts = ps.ts left join _env e on e.ts = ps.ts),
           pd as (
             insert into peer_days (site_id, group_key, day, ts, median_oi, q25_oi, q75_oi, members)
             select $1, grp, $2::date, array_agg(ts), array_agg(q50), array_agg(q25), array_agg(q75), array_agg(nu::int)
               from pv where lead and nu > 0 group by grp),
           t as (select count(*) total, count(*) filter (where reason is not null and reason not in ('low_poa', 'ramp')) site_excluded
                   from _env where day = $2::date),
           -- Each row's inputs to the medians first (null where a median must skip it: percentile_cont
           -- ignores nulls), so the sort by combiner carries a few numbers, not the joined rows. The
           -- energy lost is summed apart where the string voltage is missing: there the combiner's
           -- own voltage (a constant per combiner, applied after the sum) stands in.
           r as (
             select cr.dev, cr.rc, (cr.cur <= 0.1 and cr.iexp >= 1) zero,
                    ${first ? "cr.ts, cr.cur, case when round(cr.cur * 100) <> 0 then round(cr.cur * 100) end nz," : ""}
                    case when cr.rc = ${RC.valid} then cr.oi end oi_v,
                    case when cr.rc = ${RC.valid} then p.med end med_v,
                    case when cr.rc = ${RC.valid} and p.sd > 0 and p.nv >= 3 then (cr.oi - p.mean) / p.sd end z_v,
                    case when cr.rc = ${RC.valid} and p.mad > 0 and p.nv >= 3 then 0.6745 * (cr.oi - p.med) / p.mad end rz_v,
                    case when cr.rc <= ${RC.ramp} and p.q50 is not null then
                      case when p.v is not null then (p.q50 * cr.iexp - cr.cur) * p.v end end lost_v,
                    case when cr.rc <= ${RC.ramp} and p.q50 is not null then
                      case when p.v is null then (p.q50 * cr.iexp - cr.cur) * (1 + ${beta} * (p.tc - 25)) end end lost_fb
               from x cr left join pv p on p.grp = cr.grp and ${byInverter ? "" : "p.inv = coalesce(cr.inv, -1) and "}p.ts = cr.ts
             offset 0), -- (offset 0: not flattened into the aggregates, so computed before the sort)
           d as (
             select dev,
                    count(*) filter (where rc = ${RC.valid}) valid,
                    percentile_cont(0.5) within group (order by oi_v) oi,
                    percentile_cont(0.5) within group (order by med_v) peer_oi,
                    percentile_cont(0.5) within group (order by z_v) z,
                    percentile_cont(0.5) within group (order by rz_v) rz,
                    sum(lost_v) lost_v, sum(lost_fb) lost_fb,
                    count(*) filter (where rc = ${RC.stale}) n_stale,
                    count(*) filter (where rc = ${RC.out_of_range}) n_range,
                    count(*) filter (where rc = ${RC.clipping}) n_clip,
                    count(*) filter (where rc = ${RC.low_poa}) n_lowpoa,
                    count(*) filter (where rc = ${RC.ramp}) n_ramp,
                    count(*) filter (where zero) n_zero,
                    count(*) n_rows
                    ${first ? ", array_agg(ts) ts, array_agg(cur::real) cur, count(nz) - count(distinct nz) repeats" : ""}
               from r group by dev),
           ${
             first
               ? `cc as (insert into combiner_currents (site_id, combiner_id, day, ts, current)
                         select $1, c.dev, $2::date, coalesce(d.ts, '{}'), coalesce(d.cur, '{}') from unnest($3::int[]) c(dev) left join d using (dev)),`
               : ""
           }
           ins as (
             insert into combiner_days as cd (site_id, combiner_id, day, valid_intervals, total_intervals, output_index, peer_median_oi, z, robust_z, strings_out, lost_kwh, loss_class, excluded)
             select $1, d.dev, $2::date, d.valid, t.total, d.oi, d.peer_oi, d.z, d.rz,
                    case when d.peer_oi > 0 then c.n * (1 - d.oi / d.peer_oi) end,
                    case when d.lost_v is not null or (d.lost_fb is not null and c.vfb is not null)
                         then (coalesce(d.lost_v, 0) + coalesce(d.lost_fb * c.vfb, 0)) * ${dtH} / 1000.0 end,
                    -- provisional loss class: classifyLoss without the block-level test, which needs the
                    -- whole day; the day's classes (classifyDay) then rewrite only the rows whose class differs
                    case when (d.n_stale + greatest(0, t.total - d.n_rows - t.site_excluded) + d.n_range + t.site_excluded)::float8 / greatest(1, t.total) > ${DAY_CLASS_RULE.maxShare} then 'data_quality'
                         when d.n_clip::float8 / greatest(1, t.total) > ${DAY_CLASS_RULE.maxShare} then 'clipping'
                         when d.rz < ${DAY_CLASS_RULE.robustZ} and d.peer_oi > 0 and c.n * (1 - d.oi / d.peer_oi) >= ${DAY_CLASS_RULE.minStringsOut} then 'strings_out'
                         else 'none' end,
                    jsonb_build_object('stale', d.n_stale, 'out_of_range', d.n_range, 'clipping', d.n_clip, 'low_poa', d.n_lowpoa,
                                       'ramp', d.n_ramp, 'zero_current', d.n_zero, 'gap', greatest(0, t.total - d.n_rows - t.site_excluded),
                                       'site_excluded', t.site_excluded)
               from d cross join t join _cmb c on c.dev = d.dev
             on conflict (combiner_id, day) do update set
               valid_intervals = excluded.valid_intervals, total_intervals = excluded.total_intervals, output_index = excluded.output_index,
               peer_median_oi = excluded.peer_median_oi, z = excluded.z, robust_z = excluded.robust_z, strings_out = excluded.strings_out,
               lost_kwh = excluded.lost_kwh, loss_class = excluded.loss_class, excluded = excluded.excluded
             returning ${DAY_ROW_COLUMNS})
           select *, null::int candidate from ins
           ${first ? `union all select null, null, null, null, null, null, null, null, dev from d where repeats >= $7::int - 1` : ""}`;
        type UnitRow = DayRow & { candidate: number | null };
        t = Date.now();
        // A prepared statement (see statementName) saves the ~13 ms of parsing and planning
        // this long statement costs per unit.
        const text = unit(combinerRows("$3", "$4", "$5", "$8", "$9"), true);
        let result = await w.query<UnitRow>({ name: statementName(text), text }, [
          siteId, d.day, u.ids, d.first, d.last, u.inverters, minRows, s.module.imp, alpha,
        ]);
        lap("unit", t);

        // Stale current (NREL PV Fleets QA, pvanalytics): a daytime run of identical values
        // (2 decimals, not zero) lasting ≥ 45 min, gaps of up to two intervals allowed; night never
        // enters. A run that long holds at least `minRows` rows of one value, so only the combiners
        // named above (rarely any) are read again, through the primary key (the same rows as the
        // unit's), and put in time order; there a row equal to the previous one
        // continues the run, and the runs are numbered among those rows: two of them are in one run
        // when the later one's previous row is the earlier one. Precedence: out of range, then
        // stale, then clipping and the rest. Where a run is found, the unit's rows are kept in a
        // temporary table with those rows excluded, and its peer statistics and daily results are
        // computed again from it (the chart currents stay).
        const candidates = result.rows.filter((r) => r.candidate != null).map((r) => r.candidate!);
        if (candidates.length) {
          t = Date.now();
          const staleText = `insert into _stale
             with c as (select r.device_id dev, r.ts, r.value::float8 cur from readings r join _env e on e.ts = r.ts
                         where r.device_id = any($3::int[]) and r.metric = ${M.current} and r.ts >= $4 and r.ts <= $5 and e.poa > 0 and e.rc is not null),
             w as (select dev, ts, cur, lag(ts) over o pts, lag(cur) over o pcur from c window o as (partition by dev order by ts)),
             s as (select dev, ts, pts, cur, lag(ts) over (partition by dev order by ts) prev from w
                    where round(cur * 100) = round(pcur * 100) and ts - pts <= make_interval(mins => $1::int * 2)),
             r as (select s.*, sum(case when pts = prev then 0 else 1 end) over (partition by dev order by ts rows unbounded preceding) run from s)
             select dev, min(pts) a, max(ts) b from r group by dev, run
             having max(ts) - min(pts) + make_interval(mins => $1::int) >= make_interval(mins => $2::int) and bool_and(round(cur * 100) <> 0)`;
          const stale = await w.query({ name: statementName(staleText), text: staleText }, [stepMin, staleMin, candidates, d.first, d.last]);
          lap("stale", t);
          if (stale.rowCount) {
            t = Date.now();
            await w.query(`create temp table _cr on commit drop as ${combinerRows("$1", "$2", "$3", "$4", "$5")}`, [u.ids, d.first, d.last, s.module.imp, alpha]);
            await w.query(
              `update _cr set rc = ${RC.stale} from _stale s
                where _cr.dev = s.dev and _cr.ts between s.a and s.b and _cr.rc <> ${RC.out_of_range}`,
            );
            await w.query(`delete from peer_days where site_id = $1 and group_key = any($2::int[]) and day = $3`, [siteId, u.groups, d.day]);
            result = await w.query<UnitRow>(unit("select * from _cr", false), [siteId, d.day, u.ids, d.first, d.last, u.inverters]);
            lap("stale", t);
          }
        }
        const written = result.rows.filter((r) => r.candidate == null);
        dailyRows.push(...written);
        dayRows.get(d.day)!.push(...written);
          await w.query("commit");
          const left = partsLeft.get(d.day)! - 1;
          partsLeft.set(d.day, left);
          if (left === 0) {
            t = Date.now();
            // Combiners with no row at all on the day (a whole-day outage) are a data-quality day,
            // not a fault: the units named every combiner they wrote, so this runs only when some
            // combiner has none (rarely).
            const list = dayRows.get(d.day)!;
            dayRows.delete(d.day);
            const seen = new Set(list.map((r) => r.combiner_id));
            const missing = combiners.filter((x) => !seen.has(x.id)).map((x) => x.id);
            if (missing.length) {
              const gaps = await w.query<DayRow>(
                `insert into combiner_days as cd (site_id, combiner_id, day, valid_intervals, total_intervals, output_index, peer_median_oi,
                                                  z, robust_z, strings_out, lost_kwh, loss_class, excluded)
                 select $1, c.dev, $2::date, 0, t.total, null, null, null, null, null, null, null, jsonb_build_object('gap', t.total)
                   from unnest($3::int[]) c(dev) cross join (select count(*) total from _env where day = $2::date) t
                 on conflict (combiner_id, day) do update set
                   valid_intervals = excluded.valid_intervals, total_intervals = excluded.total_intervals, output_index = null,
                   peer_median_oi = null, z = null, robust_z = null, strings_out = null, lost_kwh = null, loss_class = null, excluded = excluded.excluded
                 returning ${DAY_ROW_COLUMNS}`,
                [siteId, d.day, missing],
              );
              list.push(...gaps.rows);
            }
            lap("gaps", t);
            // 5. Loss classes per combiner-day (small: the day's combiners) with the domain rules.
            t = Date.now();
            await classifyDay(w, siteId, d.day, list, blockOf);
            lap("classes", t);
          }
        }
      } catch (e) {
        failure ??= e;
        await w?.query("rollback").catch(() => undefined);
      } finally {
        if (w) await releaseWorker(w);
      }
    };
    await Promise.all([conditionsStored, ...Array.from({ length: Math.min(ANALYSIS_CONNECTIONS, units.length) }, (_, k) => worker(k))]);
    if (failure !== null) throw failure;
    const combinerExcluded: Record<string, number> = {};
    for (const row of dailyRows) {
      combinerExcluded.valid = (combinerExcluded.valid ?? 0) + row.valid_intervals;
      for (const k of ["out_of_range", "stale", "clipping", "low_poa", "ramp", "zero_current"])
        if (row.excluded?.[k]) combinerExcluded[k] = (combinerExcluded[k] ?? 0) + row.excluded[k];
    }

    // 6. Flags: the day-by-day history of each combiner (incremental runs replay a few windows back).
    t = Date.now();
    const flagStats = await updateFlags(siteId, { fromDay: opts.fromDay ? range.from : undefined });
    lap("flags", t);

    // 7. Timestamp audit on the POA series of these days.
    const timestampAudit = auditDays(rows, poa, intervalMin, s);
    seconds.total = (Date.now() - t0) / 1000;
    return {
      days: dailyRows.length ? new Set(rows.map((r) => r.day)).size : 0,
      fromDay: range.from,
      toDay: range.to,
      combiners: combiners.length,
      intervals: rows.length,
      siteExcluded,
      combinerExcluded,
      timestampAudit,
      flags: flagStats,
      seconds,
    };
  } catch (e) {
    await c.query("rollback").catch(() => undefined);
    throw e;
  } finally {
    // Worker connections set up but not taken (fewer units than connections, or the run ended
    // before step 2) go back to the pool here.
    await Promise.all(
      warm.map(async (ready, k) => {
        if (taken.has(k)) return;
        const w = await ready.catch(() => null);
        if (w) await releaseWorker(w);
      }),
    );
    await c.query("select pg_advisory_unlock(hashtext('analysis:' || $1))", [siteId]).then(
      () => c.release(),
      () => c.release(true),
    );
  }
}

/** A worker connection back to the pool, cleared of the run's session settings and tables. */
async function releaseWorker(w: Q) {
  await w.query("discard temp; reset all").then(
    () => w.release(),
    () => w.release(true),
  );
}

/**
 * The name of a per-unit statement's prepared form, from its text (the unit statement holds the
 * site's settings inline, so each site and setting has its own): parsed once per pooled connection
 * and kept there across runs; after PostgreSQL's first five custom plans it runs on its cached
 * generic plan (the same hash joins). A plan that refers to a dropped temporary table (the next
 * run's _env and _cmb are new tables) is planned again by PostgreSQL itself.
 */
function statementName(text: string): string {
  return `sunsift_${createHash("sha1").update(text).digest("hex").slice(0, 20)}`;
}

/** A combiner-day as a unit (or the whole-day gap step) wrote it: what its loss class needs. */
interface DayRow {
  combiner_id: number;
  valid_intervals: number;
  total_intervals: number;
  output_index: number | null;
  robust_z: number | null;
  strings_out: number | null;
  loss_class: string | null;
  excluded: Record<string, number> | null;
}
const DAY_ROW_COLUMNS = "cd.combiner_id, cd.valid_intervals, cd.total_intervals, cd.output_index, cd.robust_z, cd.strings_out, cd.loss_class, cd.excluded";

/**
 * The loss classes of one day's combiners with the domain rules (dayLossClasses: the block-level
 * test needs the whole day), from the rows the units wrote; only the rows whose class differs
 * from the provisional one are written again (usually none).
 */
async function classifyDay(c: Q, siteId: string, day: string, list: readonly DayRow[], blockOf: ReadonlyMap<number, number | null>) {
  const cls = dayLossClasses(
    list.map((x) => ({
      combinerId: x.combiner_id,
      blockId: blockOf.get(x.combiner_id) ?? null,
      oi: x.output_index,
      total: x.total_intervals,
      excluded: x.excluded,
      robustZ: x.robust_z,
      stringsOut: x.strings_out,
    })),
  );
  const ids = list.filter((x, i) => x.loss_class !== cls[i]).map((x) => x.combiner_id);
  const classes = cls.filter((k, i) => list[i]!.loss_class !== k);
  if (ids.length)
    await c.query(
      `update combiner_days cd set loss_class = u.cls from unnest($1::int[], $2::text[]) u(id, cls)
        where cd.site_id = $3 and cd.day = $4 and cd.combiner_id = u.id`,
      [ids, classes, siteId, day],
    );
}

/** Observed (midpoint of POA above 10 % of the day's maximum) vs computed solar noon, per local day. */
function auditDays(rows: { ts: Date; day: string }[], poa: (number | null)[], intervalMin: number, s: SiteSettings) {
  const half = (s.dataConvention === "end" ? -1 : 1) * intervalMin * 30_000;
  const byDay = new Map<string, { t: number[]; v: (number | null)[] }>();
  rows.forEach((r, i) => {
    const d = byDay.get(r.day) ?? { t: [], v: [] };
    d.t.push(r.ts.getTime() + half);
    d.v.push(poa[i] ?? null);
    byDay.set(r.day, d);
  });
  const days = [...byDay.entries()].map(([day, d]) => {
    const obs = observedSolarNoon(d.t, d.v, "midpoint");
    const computed = solarNoonUtc(new Date(`${day}T00:00:00Z`), s.longitude).getTime();
    return { day, shiftMin: obs == null ? null : Math.round(((obs - computed) / 60_000) * 10) / 10 };
  });
  if (!days.some((d) => d.shiftMin != null)) return null;
  return { ...auditTimestamps(days), days };
}

export type { ExclusionReason };
