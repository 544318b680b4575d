/**
 * The simulation loop: for each 5-minute interval, weather → combiner currents → inverter DC
 * and AC power → one wide CSV row. Physics [DOMAIN.md §5, §6, DESIGN.md "Computation"]:
 *   I_comb = Σ_healthy(1 + mismatch_s) · Imp · G/1000 · (1 + αIsc (Tc − 25)) · soiling · shading
 *   V_str  = Ns · Vmp · (1 + βVmp (Tc − 25) + 0.03 ln(G/1000)),  βVmp ≈ γPmp − αIsc
 *   P_dc   = Σ I_comb · V_str · (1 − 1 % DC cabling),  P_ac = η_PVWatts(P_dc) · P_dc, ≤ AC rating
 * When an inverter clips it moves off the maximum power point and all its combiner currents
 * drop in proportion (a simplification: the voltage rise is ignored).
 */
import type { FaultEffects } from "./faults";
import type { Plant } from "./plant";
import type { Rng } from "./prng";
import { formatLocalIso, localToUtc } from "./time";
import { ambientAt, intervalWeather, planDays, skyIndexSeries, solarHour, windAt, type DayWeather, type IntervalWeather } from "./weather";

export interface Column {
  header: string;
  device: string;
  metric:
    | "dc_current"
    | "dc_voltage"
    | "dc_power"
    | "ac_power"
    | "poa_irradiance"
    | "ghi"
    | "module_temperature"
    | "ambient_temperature"
    | "wind_speed";
  unit: string;
}

export const MET = "MET1";

export function columnsFor(plant: Plant): Column[] {
  const cols: Column[] = [];
  for (const c of plant.combiners) cols.push({ header: `${c.id} DC Current [A]`, device: c.id, metric: "dc_current", unit: "A" });
  for (const i of plant.inverters) {
    cols.push({ header: `${i.id} DC Power [kW]`, device: i.id, metric: "dc_power", unit: "kW" });
    cols.push({ header: `${i.id} AC Power [kW]`, device: i.id, metric: "ac_power", unit: "kW" });
  }
  cols.push({ header: `${MET} POA Irradiance [W/m2]`, device: MET, metric: "poa_irradiance", unit: "W/m2" });
  cols.push({ header: `${MET} GHI [W/m2]`, device: MET, metric: "ghi", unit: "W/m2" });
  cols.push({ header: `${MET} Ambient Temp [degC]`, device: MET, metric: "ambient_temperature", unit: "degC" });
  cols.push({ header: `${MET} Module Temp [degC]`, device: MET, metric: "module_temperature", unit: "degC" });
  cols.push({ header: `${MET} Wind Speed [m/s]`, device: MET, metric: "wind_speed", unit: "m/s" });
  return cols;
}

/** PVWatts v5 inverter efficiency (Dobos 2014), ηref 0.9637 [C, DOMAIN.md §6]. */
export function pvwattsEfficiency(pdc: number, pdc0: number, etaNom: number): number {
  const z = pdc / pdc0;
  if (z <= 0) return 0;
  return (etaNom / 0.9637) * (-0.0162 * z - 0.0059 / z + 0.9858);
}

/** A measured weather series that replaces the synthetic sky (the healthy-cloudy fixture). */
export interface MeasuredWeather {
  ghiAt(utcMs: number): number | undefined;
  ambientAt?(utcMs: number): number | undefined;
}

export interface SimOptions {
  plant: Plant;
  dates: string[];
  effects: FaultEffects;
  rng: Rng;
  measured?: MeasuredWeather;
  /** receives each row: the interval start (UTC ms), its ISO label, and the cells */
  onRow: (utcMs: number, label: string, cells: string[]) => void;
}

export interface SimResult {
  days: DayWeather[];
  rows: number;
}

const f2 = (v: number) => (v === 0 ? "0" : v.toFixed(2));
const f1 = (v: number) => (v === 0 ? "0" : v.toFixed(1));

export function simulate(o: SimOptions): SimResult {
  const { plant, dates, effects } = o;
  const site = plant.site;
  const zone = site.timeZone;
  const mod = site.module;
  const alpha = mod.alphaIscPct / 100;
  const betaVmp = (mod.gammaPmpPct - mod.alphaIscPct) / 100;
  const days = planDays(dates, o.rng.fork("days"), effects.sky, site);
  const noise = o.rng.fork("noise");
  const windRng = o.rng.fork("wind");
  const nC = plant.combiners.length;
  const combInv = plant.combiners.map((c) => plant.inverters.findIndex((i) => i.id === c.inverter));
  const dayStart = [...dates.map((d) => localToUtc(d, zone)), localToUtc(addDay(dates.at(-1)!), zone)];
  const healthy = new Float64Array(nC);
  const shadedSum = new Float64Array(effects.shading.length);
  const current = new Float64Array(nC);
  const invDc = new Float64Array(plant.inverters.length);
  const invAc = new Float64Array(plant.inverters.length);
  const combOut = plant.combiners.map((c) => c.id);
  const combIndex = new Map(plant.combiners.map((c, i) => [c.id, i]));
  const invCombs = plant.inverters.map((inv) => inv.combiners.map((c) => combIndex.get(c.id)!));
  let rows = 0;

  for (let d = 0; d < dates.length; d++) {
    const day = days[d];
    const prev = days[Math.max(0, d - 1)];
    const next = days[Math.min(days.length - 1, d + 1)];
    const kc = skyIndexSeries(day, o.rng.fork(`sky:${day.date}`));
    const outToday = effects.out[d];
    const soil = effects.soilFactor[d];
    const stuck = effects.stuck[d];
    for (let ci = 0; ci < nC; ci++) {
      const c = plant.combiners[ci];
      const out = outToday.get(ci);
      let s = 0;
      for (const st of c.strings) if (!out?.has(st.n)) s += 1 + st.mismatch;
      healthy[ci] = s * (soil.get(c.block) ?? 1);
    }
    effects.shading.forEach((sh, k) => {
      const c = plant.combiners[sh.comb];
      const out = outToday.get(sh.comb);
      let s = 0;
      for (const st of c.strings) if (sh.strings.includes(st.n) && !out?.has(st.n)) s += 1 + st.mismatch;
      shadedSum[k] = s * (soil.get(c.block) ?? 1);
    });

    for (let t = dayStart[d]; t < dayStart[d + 1]; t += 300_000) {
      const sh = solarHour(t + 150_000, site.lon);
      const measuredAmb = o.measured?.ambientAt?.(t + 150_000);
      const ambient = measuredAmb ?? ambientAt(sh, prev, day, next);
      const wind = windAt(sh, day, windRng);
      const w: IntervalWeather = intervalWeather(
        t,
        site,
        o.measured
          ? { ghiAt: (u) => o.measured!.ghiAt(u) }
          : { kcAt: (u) => kc[Math.min(kc.length - 1, Math.floor((u - dayStart[d]) / 60_000))] },
        { ambient, wind },
      );
      // combiners: true currents
      const i0 = w.daylight ? mod.imp * (w.poa / 1000) * (1 + alpha * (w.tCell - 25)) : 0;
      for (let ci = 0; ci < nC; ci++) current[ci] = i0 * healthy[ci];
      if (i0 > 0) {
        effects.shading.forEach((s, k) => {
          const inWindow = s.window === "morning" ? w.azimuth < 180 : w.azimuth >= 180;
          if (!inWindow || w.elevation >= s.belowElevationDeg) return;
          const depth = Math.min(1, (s.belowElevationDeg - w.elevation) / 6);
          current[s.comb] -= i0 * shadedSum[k] * depth * w.beamShare;
        });
      }
      // inverters
      const vString = w.daylight
        ? site.modulesPerString * mod.vmp * (1 + betaVmp * (w.tCell - 25) + 0.03 * Math.log(Math.max(w.poa, 10) / 1000))
        : 0;
      invDc.fill(0);
      for (let ci = 0; ci < nC; ci++) invDc[combInv[ci]] += current[ci];
      plant.inverters.forEach((inv, k) => {
        const pdcAvail = (invDc[k] * vString * 0.99) / 1000;
        const eff = effects.inverterEff.get(inv.id) ?? 1;
        const pdc0 = inv.acRatingKw / inv.etaNominal;
        let pdc = pdcAvail;
        let pac = Math.max(0, pvwattsEfficiency(pdc, pdc0, inv.etaNominal) * pdc * eff);
        if (pac > inv.acRatingKw) {
          for (let it = 0; it < 4; it++) pdc = inv.acRatingKw / (pvwattsEfficiency(pdc, pdc0, inv.etaNominal) * eff);
          pac = inv.acRatingKw;
          const scale = pdc / pdcAvail;
          for (const ci of invCombs[k]) current[ci] *= scale;
        }
        invDc[k] = pdc;
        invAc[k] = pac;
      });
      // measured cells
      const label = formatLocalIso(t, zone);
      const cells: string[] = [label];
      const outage = effects.outages.filter((x) => t >= x.fromUtc && t < x.toUtc);
      const silent = (dev: string) => outage.some((x) => x.devices.has(dev));
      // sensor noise is drawn only for values that are written (night zeros need none)
      for (let ci = 0; ci < nC; ci++) {
        const st = stuck.size > 0 ? stuck.get(ci) : undefined;
        if (outage.length > 0 && silent(combOut[ci])) cells.push("");
        else if (st !== undefined) cells.push(st.toFixed(2));
        else cells.push(current[ci] < 0.005 ? "0" : f2(current[ci] * (1 + noise.normal(0, 0.005))));
      }
      for (let k = 0; k < plant.inverters.length; k++) {
        const inv = plant.inverters[k];
        if (outage.length > 0 && silent(inv.id)) {
          cells.push("", "");
          continue;
        }
        const clipped = invAc[k] >= inv.acRatingKw - 1e-9;
        cells.push(
          invDc[k] < 0.05 ? "0" : f1(invDc[k] * (1 + noise.normal(0, 0.003))),
          invAc[k] < 0.05 ? "0" : f1(invAc[k] * (1 + noise.normal(0, clipped ? 0.0003 : 0.002))),
        );
      }
      const poaMeas = w.daylight ? w.poa * (1 + noise.normal(0, 0.005)) : 0;
      const ghiMeas = w.ghi > 0 ? w.ghi * (1 + noise.normal(0, 0.005)) : -2 + noise.normal(0, 0.4);
      cells.push(
        f1(Math.max(0, poaMeas)),
        f1(ghiMeas),
        f1(w.ambient + noise.normal(0, 0.1)),
        f1(w.tModule + noise.normal(0, 0.3)),
        f1(Math.max(0, w.wind)),
      );
      o.onRow(t, label, cells);
      rows++;
    }
  }
  return { days, rows };
}

function addDay(date: string): string {
  const [y, m, d] = date.split("-").map(Number);
  return new Date(Date.UTC(y, m - 1, d + 1)).toISOString().slice(0, 10);
}
