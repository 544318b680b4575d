/**
 * Recording interval of an export and the shift from the file's labelling convention to
 * Sunsift's (a reading is stored at the start of its interval).
 */

export const SUPPORTED_INTERVALS = [60, 300, 600, 900] as const;
export type IntervalSeconds = (typeof SUPPORTED_INTERVALS)[number];

export type IntervalResult = { ok: true; seconds: IntervalSeconds; share: number } | { ok: false; reason: string };

/**
 * The interval as the most common positive step between distinct sorted timestamps. Rows may be
 * out of order and repeat per device (long files), so the sample is de-duplicated and sorted
 * first; gaps and odd steps are outvoted. `share` is the fraction of steps equal to the mode.
 */
export function detectInterval(epochMsSample: number[]): IntervalResult {
  const ts = [...new Set(epochMsSample)].sort((a, b) => a - b);
  if (ts.length < 3)
    return { ok: false, reason: `Need at least 3 distinct timestamps to detect the interval; the sample has ${ts.length}.` };
  const counts = new Map<number, number>();
  for (let i = 1; i < ts.length; i++) {
    const step = ts[i] - ts[i - 1];
    counts.set(step, (counts.get(step) ?? 0) + 1);
  }
  let mode = 0;
  let best = 0;
  // Ties go to the shorter step: a file with as many 1-min as 2-min steps is a 1-min file with gaps.
  for (const [step, n] of counts) if (n > best || (n === best && step < mode)) [mode, best] = [step, n];
  const seconds = mode / 1000;
  if (!(SUPPORTED_INTERVALS as readonly number[]).includes(seconds))
    return {
      ok: false,
      reason: `The most common step between timestamps is ${describe(seconds)}; supported intervals are 1, 5, 10 and 15 minutes.`,
    };
  return { ok: true, seconds: seconds as IntervalSeconds, share: best / (ts.length - 1) };
}

function describe(seconds: number): string {
  return seconds % 60 === 0 ? `${seconds / 60} min` : `${seconds} s`;
}

export type Convention = "start" | "end";

/** Moves a timestamp to the start of its interval when the file labels interval ends. */
export function toIntervalStart(epochMs: number, convention: Convention, intervalSeconds: number): number {
  return convention === "end" ? epochMs - intervalSeconds * 1000 : epochMs;
}
