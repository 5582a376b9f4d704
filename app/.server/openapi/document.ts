import fs from "node:fs";
import path from "node:path";
import { env } from "../env";
import { sessionCookie } from "../auth/session";
import { runCreateExample, runFilterParameters, runPatchExample, schemas } from "./schemas";
import { equipmentKinds } from "~/lib/equipment";

type Operation = Record<string, unknown>;
export type PathItem = Partial<Record<"get" | "post" | "patch" | "put" | "delete", Operation>> & { parameters?: unknown[] };
export type Paths = Record<string, PathItem>;

const json = (schemaRef: string, description: string) => ({
  description,
  content: { "application/json": { schema: { $ref: `#/components/schemas/${schemaRef}` } } },
});
const err = (description: string) => json("Error", description);
const anyJson = (description: string) => ({ description, content: { "application/json": { schema: { type: "object" } } } });
const idParam = (name = "id") => ({ name, in: "path", required: true, schema: { type: "integer", minimum: 1 } });
const authErrors = { "401": err("Not signed in (unauthenticated), or the API token is wrong (invalid_token), expired (token_expired) or revoked (token_revoked).") };
const forbidden = { "403": err("Your role does not allow this.") };
const notFound = { "404": err("No such run.") };

export const corePaths: Paths = {
  "/api/v1/me": {
    get: { summary: "Who the token or session belongs to", operationId: "getMe", responses: { "200": anyJson("id, email, name, role"), ...authErrors } },
  },
  "/api/v1/users": {
    get: { summary: "Everyone with an account (lab manager)", operationId: "listUsers", responses: { "200": anyJson("A list of people"), ...authErrors, ...forbidden } },
  },
  "/api/v1/mail": {
    get: {
      summary: "Captured mail of the fake mail server (lab manager; demo and test only)",
      operationId: "listCapturedMail",
      parameters: [{ name: "to", in: "query", required: false, schema: { type: "string", format: "email" } }],
      responses: { "200": anyJson("Newest first, at most 200"), ...authErrors, ...forbidden, "404": err("Mail goes through a real relay here.") },
    },
  },
  "/api/v1/mail/outbox": {
    get: {
      summary: "The mail outbox: every queued, sent or failed e-mail without its text (lab manager)",
      operationId: "listOutbox",
      responses: {
        "200": anyJson("Newest first, at most 200: id, recipients, subject, state (queued | sent | failed), attempts, nextAttemptAt, lastError, sentAt, createdAt"),
        ...authErrors,
        ...forbidden,
      },
    },
  },
  "/api/v1/equipment": {
    get: {
      summary: "The equipment register",
      operationId: "listEquipment",
      parameters: [
        { name: "kind", in: "query", required: false, schema: { enum: [...equipmentKinds] } },
        { name: "status", in: "query", required: false, schema: { const: "in_service" }, description: "in_service: only items that can be used or booked." },
      ],
      responses: { "200": anyJson("Items"), "400": err("Unknown kind."), ...authErrors },
    },
  },
  "/api/v1/equipment/{id}": {
    parameters: [idParam()],
    get: { summary: "One item of equipment", operationId: "getEquipment", responses: { "200": anyJson("The item"), ...authErrors, "404": err("No such item.") } },
  },
  "/api/v1/openapi.json": {
    get: { summary: "This document", operationId: "getOpenApi", security: [], responses: { "200": anyJson("OpenAPI 3.1") } },
  },
};

export const runPaths: Paths = {
  "/api/v1/runs": {
    get: {
      summary: "Runs, filtered, sorted and paged by the server",
      description: "The same query as the runs table's address: copy a filtered view's search parameters here.",
      operationId: "listRuns",
      parameters: runFilterParameters(),
      responses: { "200": json("RunPage", "One page"), "400": err("Unknown filter or sort field, malformed date, page out of range."), ...authErrors },
    },
    post: {
      summary: "Log a run (technician, lab manager)",
      operationId: "createRun",
      requestBody: { required: true, content: { "application/json": { schema: { $ref: "#/components/schemas/RunCreate" }, example: runCreateExample } } },
      responses: {
        "201": json("Run", "The run as logged, in state draft"),
        "400": err("The body is not JSON."),
        ...authErrors,
        ...forbidden,
        "404": err("The run it corrects does not exist."),
        "415": err("The body is not sent as application/json."),
        "422": err("Field problems: one message per field in error.fields."),
      },
    },
  },
  "/api/v1/runs/{id}": {
    parameters: [idParam()],
    get: {
      summary: "The run record",
      description:
        "latestTheoryCheck is the current check only; checkStatus says current, out_of_date (an input changed since the latest check: checkOutOfDate.because names which, and a new check is being made when checkOutOfDate.recheckPending) or missing. While the check is not current, verdict and latestTheoryCheck are null.",
      operationId: "getRun",
      responses: { "200": json("RunDetail", "The run"), ...authErrors, ...notFound } },
    patch: {
      summary: "Change some of a run's conditions (its technician or a lab manager)",
      description: "The fields are merged over the stored run and checked as a whole; every change is kept in the run's history. A signed-off run is read-only: log a correction instead.",
      operationId: "updateRun",
      requestBody: { required: true, content: { "application/json": { schema: { $ref: "#/components/schemas/RunPatch" }, example: runPatchExample } } },
      responses: {
        "200": json("Run", "The run after the change"),
        "400": err("The body is not JSON."),
        ...authErrors,
        ...forbidden,
        ...notFound,
        "409": err("The run is signed off (code run_signed_off)."),
        "415": err("The body is not sent as application/json."),
        "422": err("Field problems."),
      },
    },
  },
  "/api/v1/runs/{id}/tracks.csv": {
    parameters: [idParam()],
    get: {
      summary: "The run's tracks as CSV",
      description:
        "One row a point: track_id, t_s, x_px, y_px, and x_m, y_m in the rotating frame (origin on the axis, y up, seen from above) when the view setup has a scale. Lab-fixed views are de-rotated by −Ω(t − t₀), t₀ the track's first time, Ω the rate the current theory check used (else the set rate).",
      operationId: "getRunTracksCsv",
      responses: {
        "200": { description: "CSV", content: { "text/csv": { schema: { type: "string" }, example: "track_id,t_s,x_px,y_px,x_m,y_m\r\n12,0,640.5,360.25,0.0412,-0.0107\r\n" } } },
        ...authErrors,
        ...notFound,
        "409": err("The run has no tracks yet (code no_tracks)."),
      },
    },
  },
  "/api/v1/runs/{id}/sign-off": {
    parameters: [idParam()],
    post: {
      summary: "Sign a run off (lab manager)",
      description:
        "Vouches for the run's current theory check: one made from the run's present conditions, frames, view setup, track, frozen calibrations and verdict tolerance. Afterwards the run is read-only; a correction is logged as a new run.",
      operationId: "signOffRun",
      responses: {
        "200": json("Run", "The run, signed off"),
        ...authErrors,
        ...forbidden,
        ...notFound,
        "409": err("The check is out of date or missing (code check_out_of_date), the run has not been checked (not_checked), or it is already signed off (run_signed_off)."),
      },
    },
  },
  "/api/v1/runs/{id}/export.json": {
    parameters: [idParam()],
    get: { summary: "Everything needed to reproduce the run's result", operationId: "exportRun", responses: { "200": json("RunExport", "The export"), ...authErrors, ...notFound } },
  },
};

export const trackingPaths: Paths = {
  "/api/v1/runs/{runId}/frames": {
    parameters: [idParam("runId")],
    get: { summary: "The run's frame stack", operationId: "listFrames", responses: { "200": anyJson("frameCount, width, height, frames"), ...authErrors, ...notFound } },
    post: {
      summary: "Upload one frame, or a ZIP of frames (technician, lab manager)",
      operationId: "uploadFrames",
      requestBody: {
        required: true,
        content: {
          "multipart/form-data": {
            schema: {
              type: "object",
              required: ["file"],
              properties: {
                file: { type: "string", contentMediaType: "application/octet-stream", description: "JPEG, PNG, TIFF or WebP image, or a ZIP of them; checked by content." },
                timeS: { type: "number", minimum: 0, exclusiveMaximum: 100000, description: "The frame's own time in s, for a frame cut from a video; without it, frames are spaced by the run's frame rate." },
              },
            },
          },
        },
      },
      responses: {
        "200": anyJson("Every file was already in the stack"),
        "201": anyJson("accepted and rejected files"),
        "400": err("No file field, or a bad timeS."),
        ...authErrors,
        ...forbidden,
        ...notFound,
        "409": err("The run is signed off."),
        "413": err("Too large."),
        "415": err("Not multipart/form-data."),
        "422": err("No frame was accepted."),
      },
    },
  },
  "/api/v1/runs/{runId}/tracking": {
    parameters: [idParam("runId")],
    get: { summary: "Progress of the latest tracking job, and the tracks found", operationId: "getTracking", responses: { "200": anyJson("runId, runState, job, tracks"), ...authErrors, ...notFound } },
    post: {
      summary: "Start tracking (technician, lab manager)",
      operationId: "startTracking",
      responses: { "202": anyJson("The queued job"), ...authErrors, ...forbidden, ...notFound, "409": err("Already running, no frames or no view setup, or signed off.") },
    },
    delete: {
      summary: "Cancel the queued or running job",
      operationId: "cancelTracking",
      responses: { "200": anyJson("The cancelled job"), ...authErrors, ...forbidden, ...notFound, "409": err("Nothing to cancel.") },
    },
  },
};

function packageVersion() {
  try {
    return (JSON.parse(fs.readFileSync(path.join(env.projectRoot, "package.json"), "utf8")) as { version: string }).version;
  } catch {
    return "0.0.0";
  }
}

/**
 * Other features' paths join here: the bookings API describes itself in ./bookings.ts (its
 * `bookingPaths`, and any other export named …Paths). A glob, so the document builds before that
 * file exists; the routes test then names every route still undescribed.
 */
const featureModules = import.meta.glob<Record<string, unknown>>("./bookings.ts", { eager: true });
const extraPaths: Paths[] = Object.values(featureModules).flatMap((mod) =>
  Object.entries(mod)
    .filter(([name]) => name.endsWith("Paths"))
    .map(([, paths]) => paths as Paths),
);

export function buildOpenApiDocument() {
  return {
    openapi: "3.1.0",
    info: {
      title: "Tankside API",
      version: packageVersion(),
      description:
        "The run log, tracking and equipment of a rotating-table teaching lab. Every route answers JSON errors as {\"error\": {\"code\", \"message\"}}. Send a personal API token (made on your account page) as Authorization: Bearer tks_…; it acts with its owner's role. A browser session cookie works too.",
    },
    servers: [{ url: "/" }],
    security: [{ bearerToken: [] }, { sessionCookie: [] }],
    paths: Object.assign({}, corePaths, runPaths, trackingPaths, ...extraPaths) as Paths,
    components: {
      securitySchemes: {
        bearerToken: { type: "http", scheme: "bearer", description: "A personal API token, tks_… (shown once when made)." },
        sessionCookie: { type: "apiKey", in: "cookie", name: sessionCookie.name, description: "The signed-in browser session." },
      },
      schemas: schemas(),
    },
  };
}
