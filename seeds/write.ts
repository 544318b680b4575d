/**
 * File writers: monthly wide CSVs streamed to disk, layout.csv, mapping.json, site.json and
 * truth.json. Output is byte-deterministic: no timestamps of the run, stable key order, "\n".
 */
import { closeSync, mkdirSync, openSync, writeFileSync, writeSync } from "node:fs";
import { join } from "node:path";
import type { Plant } from "./plant";
import type { Column } from "./simulate";

/** Quote a CSV cell only when it needs it (RFC 4180). */
export function csvCell(v: string | number): string {
  const s = String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Streams rows into readings-YYYY-MM.csv by the local month of each row's label. */
export class MonthlyCsvWriter {
  private fd: number | null = null;
  private month = "";
  private buf: string[] = [];
  private bufLen = 0;
  readonly files: string[] = [];
  constructor(
    private dir: string,
    private header: string,
  ) {
    mkdirSync(dir, { recursive: true });
  }
  row(label: string, cells: string[]) {
    const month = label.slice(0, 7);
    if (month !== this.month) {
      this.close();
      const name = `readings-${month}.csv`;
      this.fd = openSync(join(this.dir, name), "w");
      this.files.push(name);
      this.month = month;
      this.push(this.header);
    }
    this.push(cells.join(","));
  }
  private push(line: string) {
    this.buf.push(line);
    this.bufLen += line.length + 1;
    if (this.bufLen > 4_000_000) this.flush();
  }
  private flush() {
    if (this.fd !== null && this.buf.length) writeSync(this.fd, this.buf.join("\n") + "\n");
    this.buf = [];
    this.bufLen = 0;
  }
  close() {
    this.flush();
    if (this.fd !== null) closeSync(this.fd);
    this.fd = null;
  }
}

export function writeLayout(dir: string, plant: Plant) {
  const lines = ["block,inverter,combiner,string,modules,x,y"];
  for (const c of plant.combiners)
    for (const s of c.strings) lines.push([c.block, c.inverter, c.id, s.n, s.modules, s.x.toFixed(1), s.y.toFixed(1)].join(","));
  writeFileSync(join(dir, "layout.csv"), lines.join("\n") + "\n");
}

export function writeMapping(dir: string, columns: Column[]) {
  writeJson(dir, "mapping.json", columns.map(({ header, device, metric, unit }) => ({ header, device, metric, unit })));
}

/** Site settings in the shape of app/domain/site-settings.ts (plus descriptive extras). */
export function siteJson(plant: Plant) {
  const s = plant.site;
  const m = s.module;
  return {
    name: s.name,
    description: s.description,
    latitude: s.lat,
    longitude: s.lon,
    elevation: s.elevationM,
    timezone: s.timeZone,
    dcCapacityKw: plant.dcKw,
    acCapacityKw: plant.acKw,
    currency: s.currency,
    tariffPerMwh: s.tariffPerMwh,
    mounting: s.mounting,
    module: {
      pmp: m.pmp,
      vmp: m.vmp,
      imp: m.imp,
      voc: m.voc,
      isc: m.isc,
      alphaIsc: m.alphaIscPct,
      betaVoc: m.betaVocPct,
      gammaPmp: m.gammaPmpPct,
    },
    temperatureSource: { kind: "sandia", moduleType: s.moduleType },
    dataConvention: "start",
    metStations: ["MET1"],
    moduleModel: m.model,
    modulesPerString: s.modulesPerString,
    albedo: s.albedo,
    inverters: plant.inverters.map((i) => ({
      id: i.id,
      block: i.block,
      combiners: i.combiners.length,
      strings: i.combiners.reduce((a, c) => a + c.strings.length, 0),
      dcKw: i.dcKw,
      acRatingKw: i.acRatingKw,
    })),
  };
}

export function writeJson(dir: string, name: string, value: unknown) {
  writeFileSync(join(dir, name), JSON.stringify(value, null, 2) + "\n");
}
