/**
 * Planted faults: the truth entries (what truth.json holds) and their translation into the
 * per-day, per-device effects the simulator applies. The simulator reads only these entries,
 * so the data and the truth cannot drift apart.
 */
import type { Plant } from "./plant";
import type { SkyType } from "./weather";

export type FaultKind =
  | "open_string"
  | "blown_fuse"
  | "soiling"
  | "shading"
  | "stuck_sensor"
  | "comm_outage"
  | "degraded_inverter"
  | "clipping"
  | "cloudy_spell";

interface FaultBase {
  id: string;
  /** devices concerned: combiners, inverters, blocks, or "plant" */
  devices: string[];
  /** strings affected as "<combiner>/<string number>" */
  strings: string[];
  /** first local date affected */
  start: string;
  /** last local date affected (inclusive); null = still present at the end of the data */
  end: string | null;
  /** should the analysis raise a strings-out flag for it (while it lasts)? */
  shouldFlag: boolean;
  description: string;
}

export type TruthFault = FaultBase &
  (
    | {
        kind: "open_string" | "blown_fuse";
        effect: {
          stringsOut: number;
          stringsOnCombiner: number;
          /** combiner current ÷ peers' current while the fault lasts: (N − k)/N */
          expectedRatio: number;
          cause: string;
          /** date the repair was done (before sunrise); null if never repaired */
          repairedOn: string | null;
        };
      }
    | { kind: "soiling"; effect: { lossAtStart: number; lossPerDay: number; cleanedOn: string | null } }
    | { kind: "shading"; effect: { window: "morning" | "evening"; belowElevationDeg: number; obstacle: string } }
    | { kind: "stuck_sensor"; effect: { value: number; unit: "A" } }
    | { kind: "comm_outage"; effect: { from: string; to: string; intervals: number } }
    | { kind: "degraded_inverter"; effect: { efficiencyFactor: number } }
    | { kind: "clipping"; effect: { acLimitKw: number; dcKw: number; dcAcRatio: number } }
    | { kind: "cloudy_spell"; effect: { sky: SkyType[] } }
  );

export const strRef = (combiner: string, n: number) => `${combiner}/${n}`;

export function parseStrRef(ref: string): { combiner: string; n: number } {
  const i = ref.lastIndexOf("/");
  return { combiner: ref.slice(0, i), n: Number(ref.slice(i + 1)) };
}

/** The simulator's view of the faults, indexed for the hot loop. */
export interface FaultEffects {
  /** per day index, per combiner index: strings out (by number) */
  out: Array<Map<number, Set<number>>>;
  /** per day index, per block: multiplicative soiling factor (1 = clean) */
  soilFactor: Array<Map<string, number>>;
  /** per combiner index: shaded strings for a window */
  shading: Array<{ comb: number; strings: number[]; window: "morning" | "evening"; belowElevationDeg: number }>;
  /** per day index, per combiner index: stuck value */
  stuck: Array<Map<number, number>>;
  /** outage windows [fromUtc, toUtc) with the devices whose cells are empty */
  outages: Array<{ fromUtc: number; toUtc: number; devices: Set<string> }>;
  /** per inverter id: AC efficiency factor */
  inverterEff: Map<string, number>;
  /** forced sky types by date */
  sky: Map<string, SkyType>;
}

export function buildEffects(
  plant: Plant,
  dates: string[],
  faults: TruthFault[],
  toUtc: (iso: string) => number,
): FaultEffects {
  const D = dates.length;
  const dayIdx = new Map(dates.map((d, i) => [d, i]));
  const span = (f: FaultBase): [number, number] => {
    const a = dayIdx.get(f.start) ?? (f.start < dates[0] ? 0 : D);
    const b = f.end === null ? D - 1 : (dayIdx.get(f.end) ?? (f.end < dates[0] ? -1 : D - 1));
    return [a, b];
  };
  const combIdx = new Map(plant.combiners.map((c, i) => [c.id, i]));
  const fx: FaultEffects = {
    out: dates.map(() => new Map()),
    soilFactor: dates.map(() => new Map()),
    shading: [],
    stuck: dates.map(() => new Map()),
    outages: [],
    inverterEff: new Map(),
    sky: new Map(),
  };
  for (const f of faults) {
    const [a, b] = span(f);
    switch (f.kind) {
      case "open_string":
      case "blown_fuse":
        for (const ref of f.strings) {
          const { combiner, n } = parseStrRef(ref);
          const ci = combIdx.get(combiner);
          if (ci === undefined) throw new Error(`unknown combiner ${combiner} in ${f.id}`);
          for (let d = a; d <= b; d++) {
            const m = fx.out[d];
            if (!m.has(ci)) m.set(ci, new Set());
            m.get(ci)!.add(n);
          }
        }
        break;
      case "soiling": {
        const cleaned = f.effect.cleanedOn === null ? D : (dayIdx.get(f.effect.cleanedOn) ?? D);
        for (let d = 0; d < D; d++) {
          const loss =
            d < cleaned
              ? f.effect.lossAtStart + f.effect.lossPerDay * d
              : f.effect.lossPerDay * (d - cleaned);
          for (const block of f.devices) fx.soilFactor[d].set(block, 1 - loss);
        }
        break;
      }
      case "shading": {
        const byComb = new Map<string, number[]>();
        for (const ref of f.strings) {
          const { combiner, n } = parseStrRef(ref);
          if (!byComb.has(combiner)) byComb.set(combiner, []);
          byComb.get(combiner)!.push(n);
        }
        for (const [combiner, strings] of byComb) {
          const ci = combIdx.get(combiner);
          if (ci === undefined) throw new Error(`unknown combiner ${combiner} in ${f.id}`);
          fx.shading.push({ comb: ci, strings, window: f.effect.window, belowElevationDeg: f.effect.belowElevationDeg });
        }
        break;
      }
      case "stuck_sensor": {
        const ci = combIdx.get(f.devices[0]);
        if (ci === undefined) throw new Error(`unknown combiner ${f.devices[0]} in ${f.id}`);
        for (let d = a; d <= b; d++) fx.stuck[d].set(ci, f.effect.value);
        break;
      }
      case "comm_outage":
        fx.outages.push({ fromUtc: toUtc(f.effect.from), toUtc: toUtc(f.effect.to), devices: new Set(f.devices) });
        break;
      case "degraded_inverter":
        for (const inv of f.devices) fx.inverterEff.set(inv, f.effect.efficiencyFactor);
        break;
      case "clipping":
        break; // a property of the inverter rating, already in the plant
      case "cloudy_spell":
        for (let d = a, k = 0; d <= b; d++, k++) fx.sky.set(dates[d], f.effect.sky[k] ?? "overcast");
        break;
    }
  }
  return fx;
}
