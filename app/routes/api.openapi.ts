import { z } from "zod";
import { siteSettingsSchema } from "~/domain/site-settings";
import { METRICS } from "~/domain/import/metrics";

/** GET /api/v1/openapi.json — the machine clients' API, described in OpenAPI 3.1. */
export function loader() {
  return Response.json(openApiDocument(), { headers: { "Cache-Control": "public, max-age=300" } });
}

const error = { type: "object", properties: { error: { type: "string" } }, required: ["error"] } as const;
const errorResponse = (description: string) => ({ description, content: { "application/json": { schema: { $ref: "#/components/schemas/Error" } } } });
const siteId = { name: "siteId", in: "path", required: true, schema: { type: "string", format: "uuid" } } as const;

export function openApiDocument() {
  const { $schema: _ignored, ...siteSettings } = z.toJSONSchema(siteSettingsSchema, { io: "input", unrepresentable: "any", target: "draft-2020-12" }) as Record<string, unknown>;
  return {
    openapi: "3.1.0",
    info: {
      title: "Sunsift API",
      version: "1",
      description:
        "For machine clients of an organisation: create sites, send the plant layout and production exports, follow imports. Authenticate with an API token created under Settings → API tokens: `Authorization: Bearer <token>`. Scope `read` allows GET, `write` allows POST. Anything of another organisation answers 404.",
    },
    servers: [{ url: "/" }],
    security: [{ bearer: [] }],
    paths: {
      "/api/v1/me": {
        get: {
          summary: "The token's organisation and scopes",
          responses: {
            "200": {
              description: "Who the token speaks for",
              content: {
                "application/json": {
                  schema: {
                    type: "object",
                    properties: {
                      organisation: { type: "object", properties: { id: { type: "string", format: "uuid" }, name: { type: "string" } } },
                      scopes: { type: "array", items: { type: "string", enum: ["read", "write", "admin"] } },
                      tokenId: { type: "string", format: "uuid" },
                    },
                  },
                },
              },
            },
            "401": errorResponse("Missing, invalid or revoked token"),
          },
        },
      },
      "/api/v1/sites": {
        post: {
          summary: "Create a site",
          description: "The settings of the site settings form, validated by the same rules (scope write).",
          requestBody: { required: true, content: { "application/json": { schema: { $ref: "#/components/schemas/SiteSettings" } } } },
          responses: {
            "201": { description: "Created", content: { "application/json": { schema: { type: "object", properties: { id: { type: "string", format: "uuid" } }, required: ["id"] } } } },
            "400": {
              description: "Invalid settings",
              content: {
                "application/json": {
                  schema: { type: "object", properties: { error: { type: "string" }, issues: { type: "array", items: { type: "object", properties: { path: { type: "string" }, message: { type: "string" } } } } } },
                },
              },
            },
            "401": errorResponse("Missing, invalid or revoked token"),
            "403": errorResponse("The token lacks the write scope"),
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
          requestBody: { required: true, content: { "text/csv": { schema: { type: "string" } } } },
          responses: {
            "200": {
              description: "Imported: the totals",
              content: {
                "application/json": {
                  schema: {
                    type: "object",
                    properties: {
                      blocks: { type: "integer" },
                      inverters: { type: "integer" },
                      combiners: { type: "integer" },
                      strings: { type: "integer" },
                      modules: { type: "integer" },
                      warnings: { type: "array", items: { $ref: "#/components/schemas/LineError" } },
                    },
                    required: ["blocks", "inverters", "combiners", "strings", "modules"],
                  },
                },
              },
            },
            "400": {
              description: "Not imported; nothing changed",
              content: {
                "application/json": {
                  schema: { type: "object", properties: { error: { type: "string" }, errorCount: { type: "integer" }, errors: { type: "array", items: { $ref: "#/components/schemas/LineError" } } } },
                },
              },
            },
            "404": errorResponse("No such site in the token's organisation"),
            "409": errorResponse("Not imported; nothing changed: strings this layout removes carry drone findings or open work orders (named in error); send again with confirm=drop-findings"),
            "413": errorResponse("Over 20 MB"),
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
          requestBody: { required: true, content: { "text/csv": { schema: { type: "string" } } } },
          responses: {
            "202": {
              description: "Stored and queued",
              headers: { Location: { schema: { type: "string" } } },
              content: {
                "application/json": {
                  schema: { type: "object", properties: { importId: { type: "string", format: "uuid" }, statusUrl: { type: "string" } }, required: ["importId", "statusUrl"] },
                },
              },
            },
            "400": errorResponse("Bad format parameter, empty body or unknown mapping template"),
            "401": errorResponse("Missing, invalid or revoked token"),
            "403": errorResponse("The token lacks the write scope"),
            "404": errorResponse("No such site in the token's organisation"),
            "413": errorResponse("Over the upload size limit"),
            "415": errorResponse("Not text/csv"),
          },
        },
      },
      "/api/v1/imports/{id}": {
        get: {
          summary: "Follow an import",
          parameters: [{ name: "id", in: "path", required: true, schema: { type: "string", format: "uuid" } }],
          responses: {
            "200": { description: "The import", content: { "application/json": { schema: { $ref: "#/components/schemas/Import" } } } },
            "401": errorResponse("Missing, invalid or revoked token"),
            "404": errorResponse("No such import in the token's organisation"),
          },
        },
      },
    },
    components: {
      securitySchemes: { bearer: { type: "http", scheme: "bearer", description: "An API token of the organisation" } },
      schemas: {
        Error: error,
        SiteSettings: siteSettings,
        LineError: { type: "object", properties: { line: { type: "integer" }, message: { type: "string" } } },
        Import: {
          type: "object",
          properties: {
            id: { type: "string", format: "uuid" },
            siteId: { type: "string", format: "uuid" },
            status: { type: "string", enum: ["uploading", "uploaded", "mapping", "queued", "running", "done", "failed"] },
            fileName: { type: "string" },
            format: { type: ["string", "null"], enum: ["long", "wide", null] },
            sizeBytes: { type: ["integer", "null"] },
            progressBytes: { type: "integer" },
            progress: { type: "number", minimum: 0, maximum: 1 },
            rowsAccepted: { type: "integer", description: "Data lines that loaded (wholly or partly)" },
            rowsRejected: { type: "integer", description: "Data lines that gave nothing because of a reject" },
            readingsLoaded: { type: "integer", description: "Readings inserted or updated" },
            intervalSeconds: { type: ["integer", "null"] },
            summary: {
              type: "object",
              description: "Devices, period (from/to), gaps, missing values, rejects by reason",
              additionalProperties: true,
            },
            firstErrors: {
              type: "array",
              items: { type: "object", properties: { line: { type: "integer" }, column: { type: "string" }, value: { type: "string" }, reason: { type: "string" } }, required: ["line", "reason"] },
            },
            hasRejectReport: { type: "boolean" },
            rejectReportUrl: { type: ["string", "null"], description: "Short-lived link to the reject report CSV (line, column, value, reason)" },
            error: { type: ["string", "null"], description: "Why a failed import loaded nothing" },
            createdAt: { type: "string", format: "date-time" },
            startedAt: { type: ["string", "null"], format: "date-time" },
            finishedAt: { type: ["string", "null"], format: "date-time" },
          },
          required: ["id", "status", "progress", "rowsAccepted", "rowsRejected", "firstErrors"],
        },
      },
    },
  };
}
