/**
 * The demo scenario: which faults are planted where and when. Positions are preferences on the
 * 208-combiner demo plant (e.g. B1-I2-C04) that fall back to free combiners on smaller plants;
 * dates are fractions of a 60-day period, so a shorter run keeps every fault.
 */
import { strRef, type TruthFault } from "./faults";
import type { CombinerDef, Plant } from "./plant";
import { addDays, formatLocalIso, localToUtc } from "./time";
import type { SkyType } from "./weather";

export interface Scenario {
  name: string;
  faults: TruthFault[];
  /** days whose sky is forced (besides the cloudy spell): the flight day and the fixture days */
  forcedSky: Map<string, SkyType>;
  flight: { date: string; localTime: string; blocks: string[] } | null;
  workOrders: WorkOrderPlan[];
}

export interface WorkOrderPlan {
  id: string;
  title: string;
  combiner: string | null;
  string: number | null;
  block: string;
  sourceFinding: string | null;
  createdOn: string;
  closedOn: string | null;
  status: "open" | "assigned" | "in progress" | "done" | "cancelled";
  assigneeRole: "technician";
  assignee: string;
  found: string | null;
  done: string | null;
}

/** Picks combiners by preference, never the same one twice. */
class Picker {
  private used = new Set<string>();
  constructor(private plant: Plant) {}
  pick(block: number, inverter: number, index: number | "last"): CombinerDef {
    const p = this.plant;
    const b = p.blocks[Math.min(block, p.blocks.length) - 1];
    const invs = p.inverters.filter((i) => i.block === b);
    const inv = invs[Math.min(inverter, invs.length) - 1];
    const n = inv.combiners.length;
    const want = index === "last" ? n : ((index - 1) % n) + 1;
    const order = [...inv.combiners.slice(want - 1), ...inv.combiners.slice(0, want - 1), ...p.combiners];
    const c = order.find((x) => !this.used.has(x.id));
    if (!c) throw new Error("plant too small for the demo scenario");
    this.used.add(c.id);
    return c;
  }
  mark(id: string) {
    this.used.add(id);
  }
}

export function demoScenario(plant: Plant, dates: string[]): Scenario {
  const D = dates.length;
  const zone = plant.site.timeZone;
  const at = (day60: number) => dates[Math.min(D - 1, Math.max(0, Math.round((day60 / 60) * D)))];
  const pick = new Picker(plant);
  const faults: TruthFault[] = [];
  let seq = 0;
  const id = () => `F${String(++seq).padStart(2, "0")}`;
  const nb = plant.blocks.length;

  const open = (
    c: CombinerDef,
    strings: number[],
    start: string,
    cause: string,
    kind: "open_string" | "blown_fuse" = "open_string",
    repairedOn: string | null = null,
  ) => {
    const ns = strings.map((n) => Math.min(n, c.strings.length));
    const N = c.strings.length;
    faults.push({
      id: id(),
      kind,
      devices: [c.id],
      strings: ns.map((n) => strRef(c.id, n)),
      start,
      end: repairedOn ? addDays(repairedOn, -1) : null,
      shouldFlag: true,
      description: `${kind === "blown_fuse" ? "blown fuse" : "open circuit"} on ${c.id} string${ns.length > 1 ? "s" : ""} ${ns.join(", ")} (${cause})`,
      effect: {
        stringsOut: ns.length,
        stringsOnCombiner: N,
        expectedRatio: (N - ns.length) / N,
        cause,
        repairedOn,
      },
    });
  };

  // Open strings: two on the first flown block, two on the second, two on unflown blocks.
  open(pick.pick(1, 2, 4), [7], at(8), "string connector pulled apart");
  open(pick.pick(1, 4, 9), [3, 4], at(14), "string cable cut by a mower");
  open(pick.pick(2, 1, 6), [12], at(4), "burnt string connector");
  open(pick.pick(2, 3, 2), [10], at(30), "string connector pulled apart"); // after the flight
  open(pick.pick(Math.min(3, nb), 2, 11), [5, 6], at(10), "string cable damaged by rodents");
  open(pick.pick(Math.min(3, nb), 3, "last"), [5], at(22), "string connector pulled apart");
  // A blown fuse, seen by the flight and repaired by a work order.
  const fuseComb = pick.pick(1, 3, 5);
  const repairDay = at(35);
  open(fuseComb, [9], at(12), "fuse blown", "blown_fuse", repairDay);

  // Soiling on block B2 (flown), cleaned by a work order.
  const soilBlock = plant.blocks[Math.min(2, nb) - 1];
  const cleanDay = at(40);
  faults.push({
    id: id(),
    kind: "soiling",
    devices: [soilBlock],
    strings: [],
    start: dates[0],
    end: addDays(cleanDay, -1),
    shouldFlag: false,
    description: `dust building up on block ${soilBlock} (~0.15 %/day), washed on ${cleanDay}; uniform across the block, so its combiners stay level with their peers`,
    effect: { lossAtStart: 0.01, lossPerDay: 0.0015, cleanedOn: cleanDay },
  });

  // Shading at low sun on block B4: east-edge tables in the morning, west-edge tables in the evening.
  const shadeBlock = plant.blocks[nb - 1];
  const edge = (east: boolean) =>
    plant.combiners
      .filter((c) => c.block === shadeBlock && c.blockCol === (east ? c.blockCols - 1 : 0))
      .flatMap((c) => c.strings.filter((s) => s.tableCol === (east ? 1 : 0)).map((s) => strRef(c.id, s.n)));
  for (const [window, east, obstacle] of [
    ["morning", true, "tree line along the east fence"],
    ["evening", false, "earth berm along the west fence"],
  ] as const) {
    const strings = edge(east);
    if (strings.length === 0) continue;
    faults.push({
      id: id(),
      kind: "shading",
      devices: [...new Set(strings.map((s) => s.slice(0, s.lastIndexOf("/"))))],
      strings,
      start: dates[0],
      end: null,
      shouldFlag: false,
      description: `row-end shading on ${shadeBlock}: the ${obstacle} shades the outer tables in the ${window} while the sun is below 12°; POA is then far below the analysis threshold`,
      effect: { window, belowElevationDeg: 12, obstacle },
    });
  }

  // A stuck combiner current sensor.
  const stuck = pick.pick(nb, 1, 7);
  faults.push({
    id: id(),
    kind: "stuck_sensor",
    devices: [stuck.id],
    strings: [],
    start: at(18),
    end: at(24),
    shouldFlag: false,
    description: `current sensor of ${stuck.id} frozen at 87.34 A day and night (data quality, not a string fault)`,
    effect: { value: 87.34, unit: "A" },
  });

  // A communication outage of one inverter and its combiners, 10:00–15:00 local.
  const outInv = plant.inverters.find((i) => i.block === plant.blocks[Math.min(3, nb) - 1])!;
  const outDay = at(26);
  const fromMs = localToUtc(outDay, zone, 10, 0);
  const toMs = localToUtc(outDay, zone, 15, 0);
  faults.push({
    id: id(),
    kind: "comm_outage",
    devices: [outInv.id, ...outInv.combiners.map((c) => c.id)],
    strings: [],
    start: outDay,
    end: outDay,
    shouldFlag: false,
    description: `logger of ${outInv.id} offline 10:00–15:00 local: its inverter and combiner cells are empty (a communication gap, not zero production)`,
    effect: { from: formatLocalIso(fromMs, zone), to: formatLocalIso(toMs, zone), intervals: Math.round((toMs - fromMs) / 300_000) },
  });

  // A degraded inverter: AC 4 % low, combiner currents normal.
  const degraded = plant.inverters.filter((i) => i.block === plant.blocks[Math.min(3, nb) - 1]).at(-1)!;
  faults.push({
    id: id(),
    kind: "degraded_inverter",
    devices: [degraded.id],
    strings: [],
    start: dates[0],
    end: null,
    shouldFlag: false,
    description: `${degraded.id} converts 4 % less DC to AC (cooling fan fault); DC side and combiner currents normal`,
    effect: { efficiencyFactor: 0.96 },
  });

  // Clear-noon clipping of the undersized inverter.
  const clipInv = plant.inverters.reduce((a, b) => (b.dcKw / b.acRatingKw > a.dcKw / a.acRatingKw ? b : a));
  faults.push({
    id: id(),
    kind: "clipping",
    devices: [clipInv.id],
    strings: [],
    start: dates[0],
    end: null,
    shouldFlag: false,
    description: `${clipInv.id} is undersized (DC/AC ${(clipInv.dcKw / clipInv.acRatingKw).toFixed(2)}): AC power plateaus at its rating around clear noons and its combiner currents dip with it`,
    effect: { acLimitKw: clipInv.acRatingKw, dcKw: clipInv.dcKw, dcAcRatio: Math.round((clipInv.dcKw / clipInv.acRatingKw) * 100) / 100 },
  });

  // A short plant-wide cloudy spell.
  const spell = [at(44), at(45), at(46)].filter((d, i, a) => a.indexOf(d) === i);
  const skies: SkyType[] = (["overcast", "overcast", "broken"] as SkyType[]).slice(0, spell.length);
  faults.push({
    id: id(),
    kind: "cloudy_spell",
    devices: ["plant"],
    strings: [],
    start: spell[0],
    end: spell.at(-1)!,
    shouldFlag: false,
    description: "plant-wide cloudy spell (overcast, overcast, broken cloud): all combiners drop together",
    effect: { sky: skies },
  });

  const flightDate = at(19);
  const forcedSky = new Map<string, SkyType>([[flightDate, "clear"]]);
  const flownBlocks = plant.blocks.slice(0, Math.min(2, nb));
  const woTech = "Javier Olmedo (field technician, invented)";
  const workOrders: WorkOrderPlan[] = [
    {
      id: "WO-0001",
      title: `Check string ${fuseComb.id}/9: offline in IR`,
      combiner: fuseComb.id,
      string: 9,
      block: fuseComb.block,
      sourceFinding: strRef(fuseComb.id, 9),
      createdOn: addDays(flightDate, 1) < repairDay ? addDays(flightDate, 1) : flightDate,
      closedOn: repairDay,
      status: "done",
      assigneeRole: "technician",
      assignee: woTech,
      found: "fuse blown",
      done: "replaced fuse",
    },
    {
      id: "WO-0002",
      title: `Wash modules of block ${soilBlock}`,
      combiner: null,
      string: null,
      block: soilBlock,
      sourceFinding: null,
      createdOn: addDays(cleanDay, -3) > dates[0] ? addDays(cleanDay, -3) : dates[0],
      closedOn: cleanDay,
      status: "done",
      assigneeRole: "technician",
      assignee: woTech,
      found: "even dust layer on all tables",
      done: "washed all tables with demineralised water",
    },
    {
      id: "WO-0003",
      title: `Trim the tree line along the east fence of ${shadeBlock}`,
      combiner: null,
      string: null,
      block: shadeBlock,
      sourceFinding: null,
      createdOn: at(50),
      closedOn: null,
      status: "open",
      assigneeRole: "technician",
      assignee: woTech,
      found: null,
      done: null,
    },
  ];
  return {
    name: "demo",
    faults,
    forcedSky,
    flight: { date: flightDate, localTime: "13:30", blocks: flownBlocks },
    workOrders,
  };
}

/** The `small` fixture: one open string of 12 on the third combiner from the first day, a clear day. */
export function smallScenario(plant: Plant, dates: string[]): Scenario {
  const c = plant.combiners[Math.min(2, plant.combiners.length - 1)];
  const N = c.strings.length;
  return {
    name: "small",
    faults: [
      {
        id: "F01",
        kind: "open_string",
        devices: [c.id],
        strings: [strRef(c.id, 5)],
        start: dates[0],
        end: null,
        shouldFlag: true,
        description: `open circuit on ${c.id} string 5 (string connector pulled apart)`,
        effect: { stringsOut: 1, stringsOnCombiner: N, expectedRatio: (N - 1) / N, cause: "string connector pulled apart", repairedOn: null },
      },
    ],
    forcedSky: new Map(dates.map((d) => [d, "clear" as SkyType])),
    flight: null,
    workOrders: [],
  };
}

/** No fault at all (the healthy-cloudy fixture). */
export function healthyScenario(): Scenario {
  return { name: "healthy", faults: [], forcedSky: new Map(), flight: null, workOrders: [] };
}
