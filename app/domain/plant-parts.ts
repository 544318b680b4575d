/**
 * The plant cut into at most `k` parts of similar size that can be analysed apart: combiners that
 * share a peer group or an inverter (its clipping and its string voltage) stay in one part.
 */
export function plantParts<D extends { id: number; parent_id: number | null }>(combiners: D[], groupOf: (d: D) => number, k: number) {
  const up = new Map<string, string>();
  const find = (x: string): string => {
    let r = x;
    while (up.has(r) && up.get(r) !== r) r = up.get(r)!;
    up.set(x, r);
    return r;
  };
  const join = (a: string, b: string) => {
    const ra = find(a);
    const rb = find(b);
    if (ra !== rb) up.set(ra, rb);
  };
  for (const d of combiners) join(`g${groupOf(d)}`, d.parent_id != null ? `i${d.parent_id}` : `g${groupOf(d)}`);
  const components = new Map<string, D[]>();
  for (const d of combiners) {
    const root = find(`g${groupOf(d)}`);
    const list = components.get(root);
    if (list) list.push(d);
    else components.set(root, [d]);
  }
  const parts = Array.from({ length: Math.max(1, k) }, () => [] as D[]);
  // Largest first, each to the smallest part so far.
  for (const comp of [...components.values()].sort((a, b) => b.length - a.length)) parts.reduce((m, p) => (p.length < m.length ? p : m)).push(...comp);
  return parts
    .filter((p) => p.length)
    .map((p) => ({
      ids: p.map((d) => d.id),
      groups: [...new Set(p.map(groupOf))],
      inverters: [...new Set(p.flatMap((d) => (d.parent_id != null ? [d.parent_id] : [])))],
    }));
}
