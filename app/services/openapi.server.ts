import { z } from "zod";
import { siteSettingsSchema } from "~/domain/site-settings";
import { METRICS } from "~/domain/import/metrics";
import { FLAG_STATES } from "~/db/schema/analysis";
import { FLAG_SORTS } from "~/models/flags.server";
import * as s from "~/lib/api-schemas";

/**
 * The machine clients' API (/api/v1), described in OpenAPI 3.1 and served by
 * app/routes/api.openapi.ts. Every route under api/v1 of app/routes.ts has its operations here
 * (tests/integration/openapi.test.ts fails otherwise); request and answer schemas are the zod
 * schemas the routes use (app/lib/api-schemas.ts, the site settings form's schema).
 */

/**
 * One answer of an operation: its JSON body's schema (the one the route types its answer by), or
 * `text` for a plain-text body. The document is generated from these, so it follows the routes.
 */
export interface ApiAnswer {
  description: string;
  schema?: z.ZodType;
  /** Also (or only, without `schema`) answered as text/plain: the body-size guard in front of the app. */
  text?: boolean;
  headers?: Record<string, { description: string; schema: { type: "string" } }>;
}
export interface ApiOperation {
  summary: string;
  description?: string;
  /** Needs no token. */
  open?: boolean;
  parameters?: Record<string, unknown>[];
  requestBody?: { description?: string; json?: z.ZodType; csv?: true; form?: z.ZodType };
  responses: Record<string, ApiAnswer>;
}

const pathId = (name: string, description: string, schema: Record<string, unknown> = { type: "string", format: "uuid" }) => ({ name, in: "path", required: true, description, schema });
const siteId = pathId("siteId", "A site of the token's organisation");

const noToken: ApiAnswer = { description: "Missing, invalid or revoked token", schema: s.apiError };
const noWrite: ApiAnswer = { description: "The token lacks the write scope", schema: s.apiError };
/** Routes the app's own screens share with tokens: a signed-in person without the permission gets 403. */
const noPermission: ApiAnswer = { description: "Signed in (session cookie) without the permission this needs", schema: s.apiError };
const noSite: ApiAnswer = { description: "No such site in the token's organisation", schema: s.apiError };

export const API: Record<string, { get?: ApiOperation; post?: ApiOperation }> = {
  "/api/v1/me": {
    get: {
      summary: "The token's organisation and scopes",
      responses: { "200": { description: "Who the token speaks for", schema: s.meResponse }, "401": noToken },
    },
  },
  "/api/v1/openapi.json": {
    get: {
      summary: "This document",
      open: true,
      responses: { "200": { description: "The API in OpenAPI 3.1", schema: z.object({ openapi: z.string(), paths: z.record(z.string(), z.unknown()) }).loose() } },
    },
  },
  "/api/v1/sites": {
    post: {
      summary: "Create a site",
      description: "The settings of the site settings form, validated by the same rules (scope write).",
      requestBody: { json: siteSettingsSchema },
      responses: {
        "201": { description: "Created", schema: s.createSiteResponse },
        "400": { description: "Not valid JSON, or invalid settings (each issue names its field)", schema: s.siteSettingsError },
        "401": noToken,
        "403": noWrite,
      },
    },
  },
  "/api/v1/sites/{siteId}/layout": {
    post: {
      summary: "Import the plant layout",
      description:
        "CSV with one row per string: `block,inverter,combiner,string,modules,x,y` (x, y in metres, optional). All or nothing: on any error nothing changes. Re-importing updates in place; combiners keep their identity and history. A file that removes strings carrying drone findings (which would be deleted with them) or named by open work orders is refused with 409 unless `confirm=drop-findings` is given.",
      parameters: [
        siteId,
        { name: "confirm", in: "query", required: false, schema: { type: "string", enum: ["drop-findings"] }, description: "Go ahead although strings with drone findings or open work orders are removed (the findings are deleted)." },
      ],
      requestBody: { csv: true },
      responses: {
        "200": { description: "Imported: the totals, and lines worth a look", schema: s.layoutResponse },
        "400": { description: "Not imported; nothing changed: the file could not be read, or lines are wrong (each names its line and reason)", schema: s.uploadRefused },
        "401": noToken,
        "403": noWrite,
        "404": noSite,
        "409": { description: "Not imported; nothing changed: strings this layout removes carry drone findings or open work orders; send again with confirm=drop-findings", schema: s.layoutDropRefused },
        "413": { description: "Over 20 MB", schema: s.apiError, text: true },
      },
    },
  },
  "/api/v1/sites/{siteId}/readings": {
    post: {
      summary: "Send a production export",
      description: `The SCADA export as CSV. Long layout: \`timestamp,device,metric,value\` with metric one of ${METRICS.join(", ")} in canonical units (A, V, W, W/m², °C, m/s). Wide layout: one timestamp column and one column per device and metric; columns are matched from their headers, or by a mapping template saved on the Data screen. The body is stored as received, then imported in the background: follow statusUrl. Lines that cannot be read are listed in a reject report and the rest loads; a file that cannot be read at all loads nothing.`,
      parameters: [
        siteId,
        { name: "format", in: "query", required: false, schema: { type: "string", enum: ["long", "wide"] }, description: "Refuse the file if it is not of this layout." },
        { name: "mapping", in: "query", required: false, schema: { type: "string" }, description: "Name of a mapping template of the site (wide exports)." },
        { name: "filename", in: "query", required: false, schema: { type: "string" }, description: "Name to show in the import history." },
      ],
      requestBody: { csv: true },
      responses: {
        "202": { description: "Stored and queued", schema: s.readingsAccepted, headers: { Location: { description: "The status URL", schema: { type: "string" } } } },
        "400": { description: "Bad format parameter, empty body or unknown mapping template", schema: s.apiError },
        "401": noToken,
        "403": noWrite,
        "404": noSite,
        "413": { description: "Over the upload size limit", schema: s.apiError, text: true },
        "415": { description: "Not text/csv", schema: s.apiError },
        "503": { description: "The file store or the job queue does not answer; nothing was stored", schema: s.apiError },
      },
    },
  },
  "/api/v1/imports/{id}": {
    get: {
      summary: "Follow an import",
      parameters: [pathId("id", "The importId a readings upload answered")],
      responses: { "200": { description: "The import", schema: s.importResponse }, "401": noToken, "404": { description: "No such import in the token's organisation", schema: s.apiError } },
    },
  },
  "/api/v1/sites/{siteId}/analysis": {
    get: {
      summary: "The site's latest analysis run",
      parameters: [siteId],
      responses: { "200": { description: "The latest run, or null", schema: s.latestRunResponse }, "401": noToken, "403": noPermission, "404": noSite },
    },
    post: {
      summary: "Start an analysis run",
      description: "Queues a run over the given local days (default: all the site's data) and answers its status URL. While a run asked for earlier is queued or running, the answer is that run (`existing: true`). Scope write.",
      parameters: [siteId],
      requestBody: { json: s.analysisRequest, form: s.analysisRequest },
      responses: {
        "202": { description: "Queued (or the run already queued or running)", schema: s.analysisStarted },
        "400": { description: "fromDay or toDay is not a YYYY-MM-DD date", schema: s.apiError },
        "401": noToken,
        "403": noWrite,
        "404": noSite,
      },
    },
  },
  "/api/v1/sites/{siteId}/analysis/{runId}": {
    get: {
      summary: "Follow an analysis run",
      parameters: [siteId, pathId("runId", "The runId a start answered")],
      responses: { "200": { description: "The run", schema: s.runResponse }, "401": noToken, "403": noPermission, "404": { description: "No such site, or no such run of the site", schema: s.apiError } },
    },
  },
  "/api/v1/sites/{siteId}/flags": {
    get: {
      summary: "The site's flags (combiners with strings out)",
      parameters: [
        siteId,
        { name: "state", in: "query", required: false, schema: { type: "string", enum: ["open", "all", ...FLAG_STATES], default: "open" }, description: "Open flags, all, or those in one state; anything else counts as open." },
        { name: "sort", in: "query", required: false, schema: { type: "string", enum: [...FLAG_SORTS], default: "lost" } },
        { name: "page", in: "query", required: false, schema: { type: "integer", minimum: 1, default: 1 } },
        { name: "pageSize", in: "query", required: false, schema: { type: "integer", minimum: 1, default: 100 } },
      ],
      responses: { "200": { description: "One page of flags; energy in kWh, money in the site's currency", schema: s.flagsResponse }, "401": noToken, "403": noPermission, "404": noSite },
    },
  },
  "/api/v1/sites/{siteId}/combiners/{combinerId}/series": {
    get: {
      summary: "A combiner's chart series",
      description: "Column arrays on one time axis (epoch seconds), downsampled to about 1,500 points, and the daily robust z against its peers.",
      parameters: [
        siteId,
        pathId("combinerId", "A combiner of the site (its id in the flags list)", { type: "integer", minimum: 1 }),
        { name: "days", in: "query", required: false, schema: { type: "integer", minimum: 1, maximum: 120, default: 30 }, description: "Days back from the last analysed day." },
      ],
      responses: { "200": { description: "The series", schema: s.combinerSeriesResponse }, "401": noToken, "403": noPermission, "404": { description: "No such site, or no such combiner on the site", schema: s.apiError } },
    },
  },
  "/api/v1/sites/{siteId}/findings": {
    post: {
      summary: "Import a flight's drone findings",
      description: "CSV of thermal findings of one flight: `string,class,delta_t_k,image,notes`, where `string` is `<combiner>/<string number>`, or columns `x,y` (metres on the layout grid) name the nearest string. All or nothing; then the findings are cross-referenced with the site's flags. Scope write.",
      parameters: [siteId, { name: "flightId", in: "query", required: true, schema: { type: "string", format: "uuid" }, description: "The flight the findings are of." }],
      requestBody: { csv: true },
      responses: {
        "200": { description: "Imported, and what the cross-reference did to the flags", schema: s.findingsResponse },
        "400": { description: "Not imported; nothing changed: no flightId, the file could not be read, or lines are wrong (each names its line and reason)", schema: s.uploadRefused },
        "401": noToken,
        "403": noWrite,
        "404": { description: "No such site, or no such flight on the site", schema: s.apiError },
        "413": { description: "Over 5 MB", schema: s.apiError, text: true },
      },
    },
  },
  "/api/v1/sites/{siteId}/fly-list": {
    get: {
      summary: "Where to fly next",
      description: "Blocks ranked by unexplained loss (kWh/day) with the combiners and strings to look at, and the flight windows of the next 7 days (clear-sky plane-of-array irradiance over the site's IR minimum).",
      parameters: [siteId],
      responses: { "200": { description: "The fly list and flight windows", schema: s.flyListResponse }, "401": noToken, "404": noSite },
    },
  },
};

/** A zod schema as JSON Schema 2020-12 (inline, no $schema key). */
export function jsonSchema(schema: z.ZodType, io: "input" | "output" = "output"): Record<string, unknown> {
  const { $schema: _ignored, ...rest } = z.toJSONSchema(schema, { io, unrepresentable: "any", target: "draft-2020-12" }) as Record<string, unknown>;
  return rest;
}

function operation(op: ApiOperation) {
  const body = op.requestBody;
  return {
    summary: op.summary,
    ...(op.description ? { description: op.description } : {}),
    ...(op.open ? { security: [] } : {}),
    ...(op.parameters ? { parameters: op.parameters } : {}),
    ...(body
      ? {
          requestBody: {
            required: !body.form,
            content: {
              ...(body.json ? { "application/json": { schema: jsonSchema(body.json, "input") } } : {}),
              ...(body.form ? { "application/x-www-form-urlencoded": { schema: jsonSchema(body.form, "input") } } : {}),
              ...(body.csv ? { "text/csv": { schema: { type: "string" } } } : {}),
            },
          },
        }
      : {}),
    responses: Object.fromEntries(
      Object.entries(op.responses).map(([status, a]) => [
        status,
        {
          description: a.description,
          ...(a.headers ? { headers: a.headers } : {}),
          content: {
            ...(a.schema ? { "application/json": { schema: jsonSchema(a.schema) } } : {}),
            ...(a.text ? { "text/plain": { schema: { type: "string" } } } : {}),
          },
        },
      ]),
    ),
  };
}

export function openApiDocument() {
  return {
    openapi: "3.1.0",
    info: {
      title: "Sunsift API",
      version: "1",
      description:
        "For machine clients of an organisation: create sites, send the plant layout and production exports, follow imports, start and follow the analysis, read flags, combiner series and the fly list, send drone findings. Authenticate with an API token created under Settings → API tokens: `Authorization: Bearer <token>`. Scope `read` allows GET, `write` allows POST. Anything of another organisation answers 404. Every error answers JSON `{ \"error\": \"…\" }` in plain words (a few add details, as documented per answer).",
    },
    servers: [{ url: "/" }],
    security: [{ bearer: [] }],
    paths: Object.fromEntries(
      Object.entries(API).map(([path, ops]) => [path, Object.fromEntries(Object.entries(ops).map(([method, op]) => [method, operation(op!)]))]),
    ),
    components: {
      securitySchemes: { bearer: { type: "http", scheme: "bearer", description: "An API token of the organisation" } },
    },
  };
}
