import { z } from "zod";
import { FLAG_STATES } from "~/db/schema/analysis";
import { TOKEN_SCOPES } from "~/permissions";

/**
 * The bodies the API (/api/v1) answers and accepts, as zod schemas. The routes type their answers
 * by them (`z.infer`) and the OpenAPI document (app/services/openapi.server.ts) is generated from them,
 * so the document cannot drift from what the routes send. tests/integration/openapi.test.ts
 * checks real answers against the served document.
 */

const day = z.iso.date().describe("Local day, YYYY-MM-DD");
const instant = z.iso.datetime({ offset: true });

/** Every error answer: `{ error }` in plain words. */
export const apiError = z.object({ error: z.string() });

/** One refused line of an uploaded file (layout, findings). */
export const lineError = z.object({ line: z.number().int(), reason: z.string() });

export const meResponse = z.object({
  organisation: z.object({ id: z.uuid(), name: z.string() }),
  scopes: z.array(z.enum(TOKEN_SCOPES)),
  tokenId: z.uuid(),
});

export const createSiteResponse = z.object({ id: z.uuid() });
export const siteSettingsError = z.object({
  error: z.string(),
  issues: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
});

export const layoutResponse = z.object({
  blocks: z.number().int(),
  inverters: z.number().int(),
  combiners: z.number().int(),
  strings: z.number().int(),
  modules: z.number().int(),
  warnings: z.array(lineError),
});
/** A refused file: why, and (when its lines were read) how many lines were wrong and the first of them. */
export const uploadRefused = z.object({
  error: z.string(),
  errorCount: z.number().int().optional(),
  errors: z.array(lineError).optional(),
});
export const layoutDropRefused = z.object({
  error: z.string(),
  findings: z.number().int().describe("Drone findings on the strings this layout removes"),
  workOrders: z.number().int().describe("Open work orders naming those strings"),
});

export const readingsAccepted = z.object({ importId: z.uuid(), statusUrl: z.string() });

export const importResponse = z.object({
  id: z.uuid(),
  siteId: z.uuid(),
  status: z.enum(["uploading", "uploaded", "mapping", "queued", "running", "done", "failed"]),
  fileName: z.string(),
  format: z.enum(["long", "wide"]).nullable(),
  sizeBytes: z.number().int().nullable(),
  progressBytes: z.number().int(),
  progress: z.number().min(0).max(1),
  rowsAccepted: z.number().int().describe("Data lines that loaded (wholly or partly)"),
  rowsRejected: z.number().int().describe("Data lines that gave nothing because of a reject"),
  readingsLoaded: z.number().int().describe("Readings inserted or updated"),
  intervalSeconds: z.number().int().nullable(),
  summary: z.record(z.string(), z.unknown()).describe("Devices, period (from/to), gaps, missing values, rejects by reason"),
  firstErrors: z.array(z.object({ line: z.number().int(), column: z.string().optional(), value: z.string().optional(), reason: z.string() })),
  hasRejectReport: z.boolean(),
  rejectReportUrl: z.string().nullable().describe("Short-lived link to the reject report CSV (line, column, value, reason)"),
  error: z.string().nullable().describe("Why a failed import loaded nothing"),
  createdAt: instant,
  startedAt: instant.nullable(),
  finishedAt: instant.nullable(),
});

/** POST /api/v1/sites/:siteId/analysis (JSON or form). */
export const analysisRequest = z.object({
  fromDay: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional().describe("First local day to analyse, YYYY-MM-DD (default: the first day with data)"),
  toDay: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional().describe("Last local day to analyse, YYYY-MM-DD (default: the last day with data)"),
});
export const analysisStarted = z.object({
  runId: z.uuid(),
  jobId: z.string().nullable(),
  existing: z.boolean().describe("True when this is a run asked for earlier that is still queued or running"),
  statusUrl: z.string(),
});

const runStatus = z.enum(["queued", "running", "done", "failed"]);
const runTrigger = z.enum(["import", "manual", "api", "seed"]);
const runStats = z.record(z.string(), z.unknown()).nullable().describe("Counts of excluded intervals per rule, and other figures of the run");
const runError = z.string().nullable().describe("Why a failed run stopped, in plain words with a reference for the administrator");

export const analysisRun = z.object({
  id: z.uuid(),
  siteId: z.uuid(),
  status: runStatus,
  trigger: runTrigger,
  fromDay: day.nullable(),
  toDay: day.nullable(),
  stats: runStats,
  error: runError,
  jobId: z.string().nullable(),
  createdAt: instant,
  finishedAt: instant.nullable(),
});
export const latestRunResponse = z.object({ run: analysisRun.nullable().describe("The site's latest run, or null before the first") });
export const runResponse = z.object({
  runId: z.uuid(),
  status: runStatus,
  trigger: runTrigger,
  fromDay: day.nullable(),
  toDay: day.nullable(),
  createdAt: instant,
  finishedAt: instant.nullable(),
  error: runError,
  stats: runStats,
});

export const flagsResponse = z.object({
  site: z.object({ id: z.uuid(), name: z.string(), currency: z.string() }),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
  flags: z.array(
    z.object({
      id: z.uuid(),
      combiner: z.string(),
      combinerId: z.number().int(),
      block: z.string().nullable(),
      state: z.enum(FLAG_STATES),
      open: z.boolean(),
      stringsOut: z.number().int(),
      stringCount: z.number().int().nullable(),
      confidence: z.number(),
      lostKwhPerDay: z.number(),
      lostKwhToDate: z.number(),
      lostMoneyPerDay: z.number().describe("In the site's currency, at its tariff"),
      firstDay: day,
      lastDay: day,
    }),
  ),
});

const nums = z.array(z.number());
const maybeNums = z.array(z.number().nullable());
export const combinerSeriesResponse = z.object({
  bucketMinutes: z.number().int(),
  t: nums.describe("Epoch seconds"),
  oi: maybeNums.describe("The combiner's current, A"),
  peer: maybeNums.describe("Median current of its peers, A"),
  q25: maybeNums,
  q75: maybeNums,
  poa: maybeNums.describe("Plane-of-array irradiance, W/m²"),
  days: z.object({ t: nums, robustZ: maybeNums, threshold: z.number() }),
});

export const findingsResponse = z.object({
  imported: z.number().int(),
  crossReference: z
    .object({ flags: z.number().int(), explained: z.number().int(), needsFlight: z.number().int(), changed: z.number().int(), unflaggedFindings: z.number().int() })
    .nullable(),
});

export const flyListResponse = z.object({
  site: z.object({ id: z.uuid(), name: z.string(), timezone: z.string() }),
  unit: z.literal("kWh/day"),
  totalUnexplainedKwhPerDay: z.number(),
  blocks: z.array(
    z.object({
      blockId: z.number().int().nullable(),
      block: z.string(),
      rank: z.number().int(),
      flags: z.number().int(),
      unexplainedKwhPerDay: z.number(),
      unexplainedMoneyPerDay: z.number(),
      lastFlown: z.string().nullable(),
      combiners: z.array(
        z.object({
          flagId: z.uuid(),
          combiner: z.string(),
          combinerId: z.number().int(),
          stringCount: z.number().int().nullable(),
          stringsOut: z.number().int(),
          lostKwhPerDay: z.number(),
          unexplainedKwhPerDay: z.number(),
          explainedFraction: z.number(),
          firstDay: z.string(),
          state: z.string(),
          strings: z.array(z.number().int()).describe("Strings to look at"),
          narrowed: z.boolean(),
          area: z.object({ xMin: z.number(), xMax: z.number(), yMin: z.number(), yMax: z.number() }).nullable().describe("Extent of the combiner's strings on the layout grid, metres"),
        }),
      ),
    }),
  ),
  flightWindows: z.object({
    model: z.string(),
    formula: z.string(),
    minPoa: z.number(),
    days: z.array(
      z.object({
        day,
        solarNoon: z.string().nullable(),
        windows: z.array(z.object({ start: z.string(), end: z.string(), peakPoa: z.number(), morning: z.boolean() })),
      }),
    ),
  }),
});

export type ApiBody<S extends z.ZodType> = z.infer<S>;

/** `Response.json(body, init)` with the body checked, at compile time, against the schema the document shows for it. */
export function apiJson<S extends z.ZodType>(_schema: S, body: z.infer<S>, init?: ResponseInit): Response {
  return Response.json(body, init);
}
