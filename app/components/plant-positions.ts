import { useQuery } from "@tanstack/react-query";
import type { PlantString } from "./plant-drawing";

/** The body of GET /sites/:siteId/plant.json: positioned strings and combiner outputs, as columns. */
export interface PlantPositions {
  strings: { id: number[]; combinerId: number[]; number: number[]; x: number[]; y: number[] };
  outputs: { day: string | null; id: number[]; name: string[]; ratio: (number | null)[]; stringsOut: (number | null)[] };
}

export interface PlantView {
  strings: PlantString[];
  names: Record<number, string>;
  outputs: Map<number, { ratio: number | null; stringsOut: number | null }>;
}

export function plantView(p: PlantPositions): PlantView {
  const s = p.strings;
  const o = p.outputs;
  return {
    strings: s.id.map((id, i) => ({ id, combinerId: s.combinerId[i]!, number: s.number[i]!, x: s.x[i]!, y: s.y[i]! })),
    names: Object.fromEntries(o.id.map((id, i) => [id, o.name[i]!])),
    outputs: new Map(o.id.map((id, i) => [id, { ratio: o.ratio[i] ?? null, stringsOut: o.stringsOut[i] ?? null }])),
  };
}

/** The site's plant drawing data (positions, names, outputs), fetched once per site and kept for a minute. */
export function usePlant(siteId: string) {
  return useQuery({
    queryKey: ["plant-positions", siteId],
    queryFn: async ({ signal }) => {
      const res = await fetch(`/sites/${siteId}/plant.json`, { signal, headers: { accept: "application/json" } });
      if (!res.ok) throw new Error(`The plant drawing could not be loaded (${res.status}).`);
      return plantView((await res.json()) as PlantPositions);
    },
    staleTime: 60_000,
  });
}
