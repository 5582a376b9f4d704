import { buildOpenApiDocument } from "~/.server/openapi/document";

/** GET /api/v1/openapi.json: the API's description; public, so tools can read it before a token exists. */
export function loader() {
  return Response.json(buildOpenApiDocument());
}
