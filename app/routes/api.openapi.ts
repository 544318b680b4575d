import { openApiDocument } from "~/services/openapi.server";

/** GET /api/v1/openapi.json — the machine clients' API, described in OpenAPI 3.1. */
export function loader() {
  return Response.json(openApiDocument(), { headers: { "Cache-Control": "public, max-age=300" } });
}
