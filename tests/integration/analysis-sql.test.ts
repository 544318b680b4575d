/**
 * The analysis computes cell temperature in SQL; it must agree with the TypeScript domain
 * function (app/domain/temperature.ts) on the same inputs, including the published vectors.
 */
import { describe, expect, it } from "vitest";
import { cellTempSql } from "../../app/models/analysis.server";
import { SANDIA_MODULE_TYPES, sandiaCellTemp, cellTempFromModule, type SandiaModuleType } from "../../app/domain/temperature";
import { pool } from "../helpers/db";

const INPUTS: [number, number, number][] = [
  [1000, 10, 0],
  [1000, 25, 1],
  [800, 30, 4.5],
  [250, -5, 12],
  [0, 15, 2],
];

describe("cell temperature in SQL = the domain function", () => {
  for (const type of Object.keys(SANDIA_MODULE_TYPES) as SandiaModuleType[]) {
    it(`Sandia ${type} (SAND2004-3535, King, Boyson & Kratochvil 2004)`, async () => {
      const expr = cellTempSql({ kind: "sandia", moduleType: type });
      const values = INPUTS.map(([g, ta, ws]) => `(${g}::float8, ${ta}::float8, ${ws}::float8, null::float8)`).join(", ");
      const r = await pool.query<{ tc: number }>(`select ${expr} tc from (values ${values}) v(poa, amb, wind, tmod)`);
      r.rows.forEach((row, i) => {
        const [g, ta, ws] = INPUTS[i]!;
        expect(row.tc).toBeCloseTo(sandiaCellTemp(g, ta, ws, type), 9);
      });
    });
  }

  it("published vectors through SQL: E 1000, Ta 10, WS 0, glass/glass open rack → 44.11703066 °C (pvlib docstring [C]); E 1000, Ta 25, WS 1, glass/polymer open rack → 54.3839 °C [X]", async () => {
    const gg = cellTempSql({ kind: "sandia", moduleType: "glass_glass_open_rack" });
    const gp = cellTempSql({ kind: "sandia", moduleType: "glass_polymer_open_rack" });
    const r = await pool.query<{ a: number; b: number }>(
      `select (select ${gg} from (select 1000::float8 poa, 10::float8 amb, 0::float8 wind, null::float8 tmod) v) a,
              (select ${gp} from (select 1000::float8 poa, 25::float8 amb, 1::float8 wind, null::float8 tmod) v) b`,
    );
    expect(r.rows[0]!.a).toBeCloseTo(44.11703066, 6);
    expect(r.rows[0]!.b).toBeCloseTo(54.3839, 3);
  });

  it("module sensor plus back-of-module offset: Tc = Tm + E/1000 · ΔT (SAND2004-3535)", async () => {
    const expr = cellTempSql({ kind: "sensor", backOffsetC: 3 });
    const r = await pool.query<{ tc: number }>(`select ${expr} tc from (values (900::float8, 20::float8, 1::float8, 52.5::float8)) v(poa, amb, wind, tmod)`);
    expect(r.rows[0]!.tc).toBeCloseTo(cellTempFromModule(52.5, 900, 3), 9);
  });
});
