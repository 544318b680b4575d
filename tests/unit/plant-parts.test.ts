import { describe, expect, it } from "vitest";
import { plantParts } from "~/domain/plant-parts";

type C = { id: number; parent_id: number | null; block: number };
/** 4 inverters of 10 combiners each; inverters 1–2 in block 1, 3–4 in block 2. */
const plant: C[] = Array.from({ length: 40 }, (_, i) => ({ id: i + 1, parent_id: Math.floor(i / 10) + 1, block: i < 20 ? 1 : 2 }));
const partOf = (parts: ReturnType<typeof plantParts>, id: number) => parts.findIndex((p) => p.ids.includes(id));

describe("plantParts: cutting the plant for parallel analysis", () => {
  it("peers by inverter: two parts of two inverters each, every combiner once", () => {
    const parts = plantParts(plant, (d) => d.parent_id!, 2);
    expect(parts).toHaveLength(2);
    expect(parts.map((p) => p.ids.length)).toEqual([20, 20]);
    expect(parts.flatMap((p) => p.ids).sort((a, b) => a - b)).toEqual(plant.map((d) => d.id));
    for (const p of parts) expect(p.inverters).toHaveLength(2);
  });

  it("never splits a peer group or an inverter", () => {
    // Peers by block: a block holds two whole inverters, so the blocks are the parts.
    const byBlock = plantParts(plant, (d) => d.block, 3);
    expect(byBlock).toHaveLength(2);
    for (const d of plant) expect(partOf(byBlock, d.id)).toBe(partOf(byBlock, plant.find((x) => x.block === d.block)!.id));
    // Peers by string count across inverters (one group spanning all): one part only.
    const spanning = plantParts(plant, () => 16, 2);
    expect(spanning).toHaveLength(1);
    expect(spanning[0]!.groups).toEqual([16]);
    // A group that reaches into another inverter pulls that whole inverter along.
    const bridged = plantParts(plant, (d) => (d.id === 11 ? 1 : d.parent_id!), 4);
    expect(partOf(bridged, 1)).toBe(partOf(bridged, 20));
  });

  it("k = 1, or combiners without an inverter", () => {
    expect(plantParts(plant, (d) => d.parent_id!, 1)).toHaveLength(1);
    const loose = plantParts([{ id: 1, parent_id: null }, { id: 2, parent_id: null }], (d) => -d.id, 2);
    expect(loose.map((p) => p.ids)).toEqual([[1], [2]]);
    expect(loose[0]!.inverters).toEqual([]);
  });
});
