import fs from "node:fs";
import path from "node:path";
import { OpenAPIRegistry, OpenApiGeneratorV31 } from "@asteasolutions/zod-to-openapi";
import { env } from "../env";
import { sessionCookie } from "../auth/session";
import { errorSchema } from "./responses/common";
import { registerCorePaths } from "./paths/core";
import { registerRunPaths } from "./paths/runs";
import { registerBookingPaths } from "./paths/bookings";
import { registerCalibrationPaths } from "./paths/calibrations";

function packageVersion() {
  try {
    return (JSON.parse(fs.readFileSync(path.join(env.projectRoot, "package.json"), "utf8")) as { version: string }).version;
  } catch {
    return "0.0.0";
  }
}

/**
 * GET /api/v1/openapi.json, generated from zod: request bodies and parameters from the very
 * schemas the routes parse with (app/lib/validation), answers from the response schemas the
 * routes' serialisers are typed by (./responses). Nothing here is written as JSON Schema by hand.
 */
export function buildOpenApiDocument() {
  const registry = new OpenAPIRegistry();
  registry.register("Error", errorSchema);
  registry.registerComponent("securitySchemes", "bearerToken", {
    type: "http",
    scheme: "bearer",
    description: "A personal API token, tks_… (shown once when made).",
  });
  registry.registerComponent("securitySchemes", "sessionCookie", {
    type: "apiKey",
    in: "cookie",
    name: sessionCookie.name,
    description: "The signed-in browser session.",
  });
  registerCorePaths(registry);
  registerRunPaths(registry);
  registerBookingPaths(registry);
  registerCalibrationPaths(registry);
  return new OpenApiGeneratorV31(registry.definitions, { sortComponents: "alphabetically" }).generateDocument({
    openapi: "3.1.0",
    info: {
      title: "Tankside API",
      version: packageVersion(),
      description:
        'The run log, tracking and equipment of a rotating-table teaching lab. Every error is {"error": {"code", "message"}}; a body that fails its request schema is 400 invalid_input with error.issues, one per field. 422 means a well-formed body the lab cannot act on now. Send a personal API token (made on your account page) as Authorization: Bearer tks_…; it acts with its owner\'s role. A browser session cookie works too.',
    },
    servers: [{ url: "/" }],
    security: [{ bearerToken: [] }, { sessionCookie: [] }],
  });
}
export type OpenApiDocument = ReturnType<typeof buildOpenApiDocument>;
