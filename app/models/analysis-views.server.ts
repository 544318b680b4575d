/**
 * Read side of the analysis: what the overview, the combiner detail and the chart series show.
 * Callers pass a site they loaded through requireSite / requireSiteApi (organisation checked).
 */
import { and, asc, desc, eq, gte } from "drizzle-orm";
import { db, pool } from "~/db/client.server";
import { blocks, combinerDays, devices, strings, type Site } from "~/db/schema";
import { metricCode } from "~/db/unmanaged/readings";
import { LOSS_CLASS_LABEL, type LossClass } from "~/domain/flags";
import { performanceRatio } from "~/domain/yields";
import { latestRun, runFailure, type AnalysisStats } from "./analysis.server";
import { combinerFlags, flagCounts, flagHistory } from "./flags.server";
import type { CombinerSeries } from "~/domain/combiner-series";

export interface OverviewData {
  lastDay: string | null;
  openLossKwhPerDay: number;
  openLossMoneyPerDay: number;
  flagsByState: Record<string, number>;
  pr7: { pr: number | null; fromDay: string; toDay: string; eacKwh: number; hPoaKwhM2: number } | null;
  coverage7: number | null;
  combiners: { id: number; name: string; block: string | null; ratio: number | null; oi: number | null; stringsOut: number | null; lossClass: string | null }[];
  notStrings: { kind: LossClass; text: string }[];
  audit: AnalysisStats["timestampAudit"];
  lastRun: { id: string; status: string; createdAt: Date; finishedAt: Date | null; error: string | null } | null;
}

interface PerfRow { from_day: string; to_day: string; eac_kwh: number | null; h: number | null; cov: number | null }
const perfCache = new Map<string, Promise<PerfRow | undefined>>();

/**
 * The 7-day energy, insolation and coverage behind the overview's PR: a scan of every combiner's
 * readings of the week (≈0.4 M rows, ≈1 s on the demo plant). New readings reach the overview
 * through an analysis run (each import queues one), so the result is kept per site, time zone,
 * last analysed day and last finished run; concurrent requests share one query.
 */
function lastWeekPerformance(site: Site, lastDay: string, runKey: string): Promise<PerfRow | undefined> {
  const key = `${site.id}|${site.timezone}|${lastDay}|${runKey}`;
  const hit = perfCache.get(key);
  if (hit) return hit;
  const q = pool()
    .query<PerfRow>(
    `with d as (select ($2::date - 6) f, $2::date t),
     b as (select (f::timestamp at time zone $3) lo, ((t + 1)::timestamp at time zone $3) hi, f, t from d),
     inv as (select id from devices where site_id = $1 and kind = 'inverter'),
     met as (select id from devices where site_id = $1 and kind = 'met' order by id limit 1),
     cmb as (select id from devices where site_id = $1 and kind = 'combiner'),
     step as (select coalesce(extract(epoch from percentile_cont(0.5) within group (order by dt)) / 3600.0, 5 / 60.0) h
                from (select ts - lag(ts) over (order by ts) dt from analysis_intervals, b where site_id = $1 and ts >= b.lo and ts < b.hi) x),
     eac as (select sum(value) w from readings, b where device_id in (select id from inv) and metric = ${metricCode("ac_power")} and ts >= b.lo and ts < b.hi),
     hpoa as (select sum(greatest(value, 0)) w from readings, b where device_id in (select id from met) and metric = ${metricCode("poa_irradiance")} and ts >= b.lo and ts < b.hi),
     daylight as (select ts from analysis_intervals, b where site_id = $1 and ts >= b.lo and ts < b.hi and reason is distinct from 'low_sun'),
     seen as (select count(*) n from readings r, b where r.device_id in (select id from cmb) and r.metric = ${metricCode("dc_current")}
                and r.ts >= b.lo and r.ts < b.hi and r.ts in (select ts from daylight))
     select b.f::text from_day, b.t::text to_day, eac.w * step.h / 1000 eac_kwh, hpoa.w * step.h / 1000 h,
            seen.n::float8 / nullif((select count(*) from daylight) * (select count(*) from cmb), 0) cov
       from b, step, eac, hpoa, seen`,
    [site.id, lastDay, site.timezone],
    )
    .then((r) => r.rows[0]);
  q.catch(() => perfCache.delete(key));
  for (const k of perfCache.keys()) {
    if (perfCache.size < 200) break;
    perfCache.delete(k);
  }
  perfCache.set(key, q);
  return q;
}

export async function siteOverview(site: Site): Promise<OverviewData> {
  const s = site.settings;
  const [lastRow] = await db().select({ day: combinerDays.day }).from(combinerDays).where(eq(combinerDays.siteId, site.id)).orderBy(desc(combinerDays.day)).limit(1);
  const lastDay = lastRow?.day ?? null;
  const counts = await flagCounts(site.id);
  const lossRow = await pool().query<{ kwh: number | null }>(
    `select sum(lost_kwh_per_day) kwh from flags where site_id = $1 and open and state <> 'dismissed'`,
    [site.id],
  );
  const openLoss = Number(lossRow.rows[0]?.kwh ?? 0);
  const run = await latestRun(site.id);
  const doneRun = run?.status === "done" ? run : await latestRun(site.id, "done");
  const base = {
    openLossKwhPerDay: openLoss,
    openLossMoneyPerDay: (openLoss / 1000) * s.tariffPerMwh,
    flagsByState: counts,
    audit: ((doneRun?.stats as AnalysisStats | null)?.timestampAudit ?? null) as OverviewData["audit"],
    lastRun: run ? { id: run.id, status: run.status, createdAt: run.createdAt, finishedAt: run.finishedAt, error: runFailure(run) } : null,
  };
  if (!lastDay) return { ...base, lastDay, pr7: null, coverage7: null, combiners: [], notStrings: [] };

  const rows = await db()
    .select({
      id: devices.id,
      name: devices.name,
      block: blocks.name,
      oi: combinerDays.outputIndex,
      peer: combinerDays.peerMedianOi,
      stringsOut: combinerDays.stringsOut,
      lossClass: combinerDays.lossClass,
    })
    .from(combinerDays)
    .innerJoin(devices, eq(devices.id, combinerDays.combinerId))
    .leftJoin(blocks, eq(blocks.id, devices.blockId))
    .where(and(eq(combinerDays.siteId, site.id), eq(combinerDays.day, lastDay)))
    .orderBy(asc(devices.name));
  const combiners = rows.map((r) => ({
    id: r.id,
    name: r.name,
    block: r.block,
    oi: r.oi,
    ratio: r.oi != null && r.peer ? r.oi / r.peer : null,
    stringsOut: r.stringsOut,
    lossClass: r.lossClass,
  }));
  const notStrings: OverviewData["notStrings"] = [];
  for (const kind of ["block_level", "data_quality", "clipping"] as const) {
    const hit = combiners.filter((c) => c.lossClass === kind);
    if (!hit.length) continue;
    const blocksHit = [...new Set(hit.map((c) => c.block ?? "?"))].sort();
    const where = kind === "block_level" ? `block ${blocksHit.join(", ")}` : `${hit.length} combiner${hit.length > 1 ? "s" : ""} (${hit.slice(0, 4).map((c) => c.name).join(", ")}${hit.length > 4 ? "…" : ""})`;
    const text = {
      block_level: `On ${lastDay}, most combiners of ${where} were low together: that looks like soiling or shading over the block, not strings out. No strings-out flag is raised for it.`,
      data_quality: `On ${lastDay}, ${where} had stuck, missing or out-of-range readings for most of the day: a data-quality issue, not a fault. Check the logger or the sensor.`,
      clipping: `On ${lastDay}, ${where} sat under inverter clipping for most of the day: output limited by the inverter, not lost in the array.`,
    }[kind];
    notStrings.push({ kind, text });
  }

  // Last 7 local days: IEC 61724-1 PR = (E_AC / P0) / (H_POA / G_ref), and data coverage.
  const p = await lastWeekPerformance(site, lastDay, doneRun ? `${doneRun.id}@${doneRun.finishedAt?.getTime() ?? ""}` : "none");
  const eac = Number(p?.eac_kwh ?? 0);
  const h = Number(p?.h ?? 0);
  // performanceRatio over one aggregate interval: Σ P·τ / (P0 · Σ G·τ / Gref) — IEC 61724-1 PR.
  const pr = h > 0 ? performanceRatio([{ poutKw: eac, poa: h * 1000, tModC: 25, hours: 1 }], s.dcCapacityKw) : null;
  return {
    ...base,
    lastDay,
    pr7: p ? { pr, fromDay: p.from_day, toDay: p.to_day, eacKwh: eac, hPoaKwhM2: h } : null,
    coverage7: p?.cov == null ? null : Math.min(1, Number(p.cov)),
    combiners,
    notStrings,
  };
}

export async function plantStrings(siteId: string) {
  return db()
    .select({ id: strings.id, combinerId: strings.combinerId, number: strings.number, x: strings.x, y: strings.y })
    .from(strings)
    .innerJoin(devices, eq(devices.id, strings.combinerId))
    .where(eq(devices.siteId, siteId));
}

export async function combinerDetail(site: Site, combinerId: number) {
  const [c] = await db()
    .select({ id: devices.id, name: devices.name, stringCount: devices.stringCount, parentId: devices.parentId, block: blocks.name })
    .from(devices)
    .leftJoin(blocks, eq(blocks.id, devices.blockId))
    .where(and(eq(devices.id, combinerId), eq(devices.siteId, site.id), eq(devices.kind, "combiner")))
    .limit(1);
  if (!c) return null;
  const [inverter] = c.parentId ? await db().select({ name: devices.name }).from(devices).where(eq(devices.id, c.parentId)).limit(1) : [];
  const strs = await db().select({ number: strings.number, modules: strings.modules }).from(strings).where(eq(strings.combinerId, c.id)).orderBy(asc(strings.number));
  const days = await db()
    .select()
    .from(combinerDays)
    .where(and(eq(combinerDays.combinerId, c.id), gte(combinerDays.day, "1900-01-01")))
    .orderBy(desc(combinerDays.day))
    .limit(60);
  const fl = await combinerFlags(c.id);
  const history = await flagHistory(c.id);
  const open = fl.find((f) => f.open) ?? null;
  return { combiner: { ...c, inverter: inverter?.name ?? null }, strings: strs, days, flags: fl, openFlag: open, history };
}

const fmtDay = (day: string) => new Date(`${day}T12:00:00Z`).toLocaleDateString("en-GB", { day: "numeric", month: "short", timeZone: "UTC" });

/** The estimate in one plain sentence. */
export function explainFlag(f: { stringsOut: number; firstDay: string; lostKwhPerDay: number; confidence: number } | null, n: number | null, lastDay?: { lossClass: string | null } | null): string {
  if (!f) {
    const cls = lastDay?.lossClass as LossClass | undefined;
    if (cls && cls !== "none" && cls !== "strings_out") return `No strings-out flag. Latest day: ${LOSS_CLASS_LABEL[cls]}.`;
    return "No strings-out flag: this combiner keeps up with its peers.";
  }
  const approx = f.confidence >= 0.6 ? "about" : "perhaps";
  return `${approx} ${f.stringsOut} of ${n ?? "?"} strings out since ${fmtDay(f.firstDay)}, losing ~${Math.round(f.lostKwhPerDay)} kWh a day.`.replace(/^./, (x) => x.toUpperCase());
}

/**
 * A combiner's output index against its peer group's median and interquartile band, and the
 * POA, over the last `days` days of results; downsampled on the server to ≤ ~1,500 points.
 */
export async function combinerSeries(site: Site, combinerId: number, days: number): Promise<CombinerSeries | null> {
  const s = site.settings;
  const r = await pool().query<{ id: number; n: number; grp: number; last: string | null }>(
    `select d.id, d.string_count n,
            case $3::text when 'block' then coalesce(d.block_id, -1) when 'string_count' then coalesce(d.string_count, 0) else coalesce(d.parent_id, -d.id) end grp,
            (select max(day)::text from combiner_days where combiner_id = d.id) last
       from devices d where d.id = $1 and d.site_id = $2 and d.kind = 'combiner'`,
    [combinerId, site.id, s.thresholds.peerGroup],
  );
  const c = r.rows[0];
  if (!c) return null;
  const empty: CombinerSeries = { bucketMinutes: 5, t: [], oi: [], peer: [], q25: [], q75: [], poa: [], days: { t: [], robustZ: [], threshold: s.thresholds.robustZ } };
  if (!c.last) return empty;
  const points = days * 24 * 12;
  const bucketMinutes = points <= 1500 ? 5 : Math.ceil(points / 1500 / 3) * 15;
  const c2 = await pool().connect();
  try {
  await c2.query("begin");
  await c2.query("set local jit = off");
  // Bounds as constants, so the planner prunes the monthly partitions at plan time.
  const b = (await c2.query<{ lo: Date; hi: Date }>(`select (($2::date - ($3::int - 1))::timestamp at time zone $1) lo, (($2::date + 1)::timestamp at time zone $1) hi`, [site.timezone, c.last, days])).rows[0]!;
  // The combiner's currents come from combiner_currents (written by the analysis, one row per
  // day) when every analysed day of the window has its row; otherwise (days analysed before
  // that table existed) from readings, one heap page per interval.
  const missing = await c2.query<{ n: number }>(
    `select count(*)::int n from combiner_days cd where cd.combiner_id = $1 and cd.day > $2::date - $3::int
        and not exists (select 1 from combiner_currents cc where cc.combiner_id = cd.combiner_id and cc.day = cd.day)`,
    [combinerId, c.last, days],
  );
  const r = missing.rows[0]!.n === 0
    ? `select ts, value from (select unnest(cc.ts) ts, unnest(cc.current) value from combiner_currents cc
                               where cc.combiner_id = $2 and cc.day > $12::date - $5::int and cc.day <= $12::date) x
        where ts >= $3 and ts < $4`
    : `select ts, value from readings where device_id = $2 and metric = ${metricCode("dc_current")} and ts >= $3 and ts < $4 and $12::date is not null`;
  const series = await c2.query<{ t: number; oi: number | null; peer: number | null; q25: number | null; q75: number | null; poa: number | null }>(
    `with e as (select ts, poa, cell_temp from analysis_intervals where site_id = $1 and ts >= $3 and ts < $4 and sun_elevation >= $9 and poa > 20 and $5::int > 0),
     r as (${r}),
     p as (select ts, median_oi, q25_oi, q75_oi
             from (select unnest(pd.ts) ts, unnest(pd.median_oi) median_oi, unnest(pd.q25_oi) q25_oi, unnest(pd.q75_oi) q75_oi from peer_days pd
                    where pd.site_id = $1 and pd.group_key = $6 and pd.day > $12::date - $5::int and pd.day <= $12::date) x
            where ts >= $3 and ts < $4)
     select extract(epoch from date_bin(make_interval(mins => $10::int), e.ts, timestamptz '2000-01-01'))::float8 t,
            avg(r.value / nullif($7::float8 * $8::float8 * e.poa / 1000 * (1 + $11::float8 * (coalesce(e.cell_temp, 25) - 25)), 0)) oi,
            avg(p.median_oi) peer, avg(p.q25_oi) q25, avg(p.q75_oi) q75, avg(e.poa) poa
       from e left join r using (ts) left join p using (ts)
      group by 1 order by 1`,
    [site.id, combinerId, b.lo, b.hi, days, c.grp, c.n, s.module.imp, s.thresholds.minSunElevation, bucketMinutes, s.module.alphaIsc / 100, c.last],
  );
  const dz = await c2.query<{ day: string; rz: number | null }>(
    `select day::text as day, robust_z rz from combiner_days where combiner_id = $1 and day > $2::date - $3::int order by day`,
    [combinerId, c.last, days],
  );
  await c2.query("commit");
  const round = (x: number | null, k = 1000) => (x == null ? null : Math.round(Number(x) * k) / k);
  return {
    bucketMinutes,
    t: series.rows.map((x) => Number(x.t)),
    oi: series.rows.map((x) => round(x.oi)),
    peer: series.rows.map((x) => round(x.peer)),
    q25: series.rows.map((x) => round(x.q25)),
    q75: series.rows.map((x) => round(x.q75)),
    poa: series.rows.map((x) => round(x.poa, 1)),
    days: {
      t: dz.rows.map((x) => Date.parse(`${x.day}T12:00:00Z`) / 1000),
      robustZ: dz.rows.map((x) => round(x.rz, 100)),
      threshold: s.thresholds.robustZ,
    },
  };
  } catch (e) {
    await c2.query("rollback").catch(() => undefined);
    throw e;
  } finally {
    c2.release();
  }
}

