/**
 * The chart series of one combiner, as /api/v1/sites/:siteId/combiners/:combinerId/series sends
 * it (app/models/analysis-views.server.ts) and the combiner screen draws it: column arrays on one
 * time axis (epoch seconds, `bucketMinutes` apart at most), and the daily robust z.
 */
export interface CombinerSeries {
  bucketMinutes: number;
  t: number[];
  oi: (number | null)[];
  peer: (number | null)[];
  q25: (number | null)[];
  q75: (number | null)[];
  poa: (number | null)[];
  days: { t: number[]; robustZ: (number | null)[]; threshold: number };
}
