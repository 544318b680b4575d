/**
 * Seeded pseudo-random numbers for the demo generator. mulberry32 (Tommy Ettinger, public
 * domain): 32-bit state, fast, good enough for synthetic data; never for anything secret.
 */
export interface Rng {
  /** uniform in [0, 1) */
  next(): number;
  uniform(lo: number, hi: number): number;
  /** standard normal (Box–Muller, one value per call; the pair's second half is cached) */
  normal(mean?: number, sd?: number): number;
  int(lo: number, hiInclusive: number): number;
  pick<T>(items: readonly T[]): T;
  /** a child generator whose sequence depends only on this seed and the label */
  fork(label: string): Rng;
}

export function hashString(s: string): number {
  // FNV-1a 32-bit
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function createRng(seed: number): Rng {
  const next = mulberry32(seed);
  let spare: number | null = null;
  const rng: Rng = {
    next,
    uniform: (lo, hi) => lo + (hi - lo) * next(),
    normal(mean = 0, sd = 1) {
      if (spare !== null) {
        const v = spare;
        spare = null;
        return mean + sd * v;
      }
      let u = 0;
      while (u === 0) u = next();
      const v = next();
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return mean + sd * r * Math.cos(2 * Math.PI * v);
    },
    int: (lo, hi) => lo + Math.floor(next() * (hi - lo + 1)),
    pick: (items) => items[Math.floor(next() * items.length)],
    fork: (label) => createRng((hashString(label) ^ Math.imul(seed >>> 0, 0x9e3779b1)) >>> 0),
  };
  return rng;
}
