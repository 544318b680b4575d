/**
 * Remembers, per series (device + metric), which line first gave a reading for each timestamp, so
 * a repeat can be refused naming the first line.
 *
 * Memory: on-grid timestamps (multiples of the interval since the epoch, which every real zone's
 * 1–15 min grid is) go into a dense Uint32Array of line numbers, 4 bytes per interval slot
 * spanned, grown by half again each time but never past 8 slots per stored reading; anything else (off-grid
 * or far-flung timestamps) goes into a Map. So memory stays proportional to the readings kept:
 * ~4 bytes each for a dense file (a month of 1-min data for 1,000 series ≈ 170 MB), more for
 * sparse ones. Callers with bigger files can turn tracking off and let the database's unique key
 * on (device, metric, ts) catch repeats instead, losing the "first seen on line N" detail.
 */

export class SeriesLines {
  private start = 0;
  private lines = new Uint32Array(0);
  private count = 0;
  private overflow: Map<number, number> | null = null;

  constructor(private readonly intervalMs: number) {}

  /** The earlier line that had this timestamp, or 0 after remembering `line` for it. */
  check(ts: number, line: number): number {
    if (ts % this.intervalMs === 0 && this.ensure(ts / this.intervalMs)) {
      const i = ts / this.intervalMs - this.start;
      const prev = this.lines[i];
      if (prev) return prev;
      this.lines[i] = line;
      this.count++;
      return 0;
    }
    this.overflow ??= new Map();
    const prev = this.overflow.get(ts);
    if (prev) return prev;
    this.overflow.set(ts, line);
    this.count++;
    return 0;
  }

  private ensure(slot: number): boolean {
    const end = this.start + this.lines.length;
    if (this.lines.length && slot >= this.start && slot < end) return true;
    if (!this.lines.length) {
      this.start = slot;
      this.lines = new Uint32Array(1024);
      return true;
    }
    const needed = Math.max(end, slot + 1) - Math.min(this.start, slot);
    // Grown by half (not doubled): a month of 5-min data (8,640 slots) ends in 11,664 slots, not 16,384.
    const size = Math.max(needed, Math.ceil(this.lines.length * 1.5));
    if (size > Math.max(65_536, 8 * (this.count + 1))) return false;
    const start = slot < this.start ? end - size : this.start;
    const grown = new Uint32Array(size);
    grown.set(this.lines, this.start - start);
    this.start = start;
    this.lines = grown;
    return true;
  }
}

export function createDuplicateTracker(intervalSeconds: number) {
  const series = new Map<string, SeriesLines>();
  function of(key: string): SeriesLines {
    let s = series.get(key);
    if (!s) series.set(key, (s = new SeriesLines(intervalSeconds * 1000)));
    return s;
  }
  return {
    /** Line that first gave (key, ts), or 0 when this is the first time. */
    check(key: string, ts: number, line: number): number {
      return of(key).check(ts, line);
    },
    /**
     * One series' tracker, for a caller that looks the series up once and then checks it for
     * every reading (no key text built and hashed per value).
     */
    series: of,
  };
}
