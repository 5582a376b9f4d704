import { z } from "zod";
import { runApiCreateSchema, runApiPatchSchema } from "~/lib/validation/run-api";
import { runFiltersSchema } from "~/lib/validation/run-filters";
import { runStates, verdicts } from "~/lib/runs";

type JsonSchema = Record<string, unknown>;

/** A request schema generated from the zod schema the route itself parses with, so the two cannot drift. */
export function fromZod(schema: z.ZodType): JsonSchema {
  const json = z.toJSONSchema(schema, { io: "input", unrepresentable: "any", target: "draft-2020-12" }) as JsonSchema;
  delete json.$schema;
  return json;
}

const fieldNotes: Record<string, string> = {
  tableId: "Equipment id of a table in service.",
  tankId: "Equipment id of a tank in service.",
  cameraId: "Equipment id of a camera in service.",
  setRateRpm: "Set rotation rate, rpm (above 0, at most 120 and the table's maximum).",
  direction: "Sense of rotation seen from above.",
  waterDepthCm: "Water depth in cm (stored as metres).",
  waterTemperatureC: "Water temperature, °C (0–40).",
  rateReachedAt: "ISO 8601 date-time the table reached its set rate.",
  cameraMode: "rotating: the camera rides on the table; lab: it stands in the room.",
  frameRateFps: "Frames per second.",
  tracer: "What is tracked.",
  purpose: "What the run is for.",
  notes: "Free notes.",
  supersedesId: "Id of the run this one corrects.",
};

function describe(schema: JsonSchema): JsonSchema {
  const props = schema.properties as Record<string, JsonSchema> | undefined;
  if (props) for (const [k, v] of Object.entries(props)) if (fieldNotes[k]) v.description = fieldNotes[k];
  if (props?.rateReachedAt) Object.assign(props.rateReachedAt, { type: "string", format: "date-time" });
  return schema;
}

const nullable = (type: string, extra: JsonSchema = {}) => ({ type: [type, "null"], ...extra });
const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` });

export const runCreateExample = {
  tableId: 1,
  tankId: 4,
  cameraId: 7,
  setRateRpm: 10,
  direction: "ccw",
  waterDepthCm: 12,
  waterTemperatureC: 20.5,
  rateReachedAt: "2025-03-14T09:30:00Z",
  cameraMode: "rotating",
  frameRateFps: 30,
  tracer: "float",
  purpose: "Inertial circles for the second-year demonstration",
  notes: "Float released near mid-radius.",
};

export const runPatchExample = { waterTemperatureC: 21, notes: "Thermometer re-read after the run." };

export function schemas(): Record<string, JsonSchema> {
  const named = { id: { type: "integer" }, name: { type: "string" } };
  return {
    Error: {
      type: "object",
      required: ["error"],
      properties: {
        error: {
          type: "object",
          required: ["code", "message"],
          properties: {
            code: { type: "string", description: "Stable, machine-readable: invalid_filter, invalid_run, run_signed_off, no_tracks, unauthenticated, invalid_token, token_expired, token_revoked, forbidden, not_found…" },
            message: { type: "string", description: "A sentence for a person." },
            field: { type: "string" },
            fields: { type: "object", additionalProperties: { type: "string" }, description: "One message per body field (422)." },
          },
        },
      },
    },
    RunCreate: describe(fromZod(runApiCreateSchema)),
    RunPatch: describe(fromZod(runApiPatchSchema)),
    Named: { type: "object", required: ["id", "name"], properties: named },
    Run: {
      type: "object",
      properties: {
        id: { type: "integer" },
        label: { type: "string", examples: ["R-0042"] },
        state: { enum: [...runStates] },
        verdict: { enum: [...verdicts, null] },
        tableId: { type: "integer" },
        tankId: { type: "integer" },
        cameraId: { type: "integer" },
        setRateRpm: { type: "number" },
        direction: { enum: ["ccw", "cw"] },
        waterDepthM: { type: "number" },
        waterTemperatureC: { type: "number" },
        rateReachedAt: nullable("string", { format: "date-time" }),
        cameraMode: { enum: ["rotating", "lab"] },
        frameRateFps: { type: "number" },
        tracer: { enum: ["float", "dye"] },
        purpose: { type: "string" },
        notes: nullable("string"),
        technicianId: { type: "integer" },
        supersedesId: nullable("integer"),
        signedOffById: nullable("integer"),
        signedOffAt: nullable("string", { format: "date-time" }),
        frameCount: { type: "integer" },
        createdAt: { type: "string", format: "date-time" },
        updatedAt: { type: "string", format: "date-time" },
      },
    },
    RunListItem: {
      type: "object",
      properties: {
        id: { type: "integer" },
        label: { type: "string" },
        createdAt: { type: "string", format: "date-time" },
        state: { enum: [...runStates] },
        verdict: { enum: [...verdicts, null] },
        table: ref("Named"),
        tank: ref("Named"),
        camera: ref("Named"),
        technician: ref("Named"),
        setRateRpm: { type: "number" },
        direction: { enum: ["ccw", "cw"] },
        waterDepthM: { type: "number" },
        waterTemperatureC: { type: "number" },
        cameraMode: { enum: ["rotating", "lab"] },
        tracer: { enum: ["float", "dye"] },
        frameCount: { type: "integer" },
        purpose: { type: "string" },
        signedOffAt: nullable("string", { format: "date-time" }),
        supersedesId: nullable("integer"),
      },
    },
    RunPage: {
      type: "object",
      required: ["items", "total", "page", "pageSize"],
      properties: { items: { type: "array", items: ref("RunListItem") }, total: { type: "integer" }, page: { type: "integer" }, pageSize: { type: "integer" } },
    },
    RunDetail: {
      type: "object",
      description: "The run record: conditions, equipment, frames, view setup, latest tracking job, tracks, latest theory check, calibrations in force, sign-off, links and history.",
      properties: {
        id: { type: "integer" },
        label: { type: "string" },
        state: { enum: [...runStates] },
        verdict: { enum: [...verdicts, null] },
        conditions: { type: "object" },
        equipment: { type: "object", properties: { table: { type: "object" }, tank: { type: "object" }, camera: { type: "object" } } },
        technician: { type: "object" },
        frames: { type: "object", properties: { count: { type: "integer" }, widthPx: nullable("integer"), heightPx: nullable("integer") } },
        viewSetup: nullable("object"),
        latestTrackingJob: nullable("object"),
        tracks: { type: "object", properties: { count: { type: "integer" }, items: { type: "array", items: { type: "object" } } } },
        latestTheoryCheck: nullable("object", { description: "The current theory check only: null while it is out of date or missing." }),
        checkStatus: { enum: ["current", "out_of_date", "missing"], description: "Whether the latest check was made from the run's present inputs; a signed-off run keeps the check it was signed with." },
        checkOutOfDate: nullable("object", {
          description: "Set when checkStatus is out_of_date.",
          properties: { because: { type: "array", items: { type: "string" }, description: "The inputs changed since the latest check, in words." }, recheckPending: { type: "boolean" }, checkId: nullable("integer") },
        }),
        calibrationsInForce: { type: "object", properties: { ids: { type: "array", items: { type: "integer" } }, records: { type: "array", items: { type: "object" } } } },
        signOff: { type: "object" },
        supersedes: nullable("object"),
        supersededBy: { type: "array", items: { type: "object" } },
        history: { type: "array", items: { type: "object", properties: { at: { type: "string" }, who: nullable("object"), field: { type: "string" }, oldValue: nullable("string"), newValue: nullable("string") } } },
      },
    },
    RunExport: {
      type: "object",
      required: ["format", "codeVersion", "conditions", "equipment", "calibrationIdsInForce", "theoryCheck"],
      properties: {
        format: { const: "tankside-run-export" },
        formatVersion: { type: "integer" },
        codeVersion: { type: "string", description: "package version, plus +<git commit> when built from a checkout." },
        run: { type: "object" },
        conditions: { type: "object" },
        equipment: { type: "object" },
        frames: { type: "object" },
        viewSetup: nullable("object"),
        calibrationIdsInForce: { type: "array", items: { type: "integer" } },
        calibrationsInForce: { type: "array", items: { type: "object" } },
        tracks: { type: "object" },
        settings: nullable("object", { description: "used: the smoothing window, order and tolerance the check applied; requested: what was asked for." }),
        theoryCheckInput: nullable("object", { description: "The check's inputs less the points: view setup, set and calibrated rate, camera mode, t₀, settings, track id." }),
        theoryCheck: nullable("object", { description: "The current theory check only; null while it is out of date (run.checkStatus says which)." }),
      },
    },
    TrackingJob: {
      type: ["object", "null"],
      properties: {
        id: { type: "integer" },
        state: { enum: ["queued", "running", "done", "failed", "cancelled"] },
        framesDone: { type: "integer" },
        framesTotal: { type: "integer" },
        percent: { type: "number" },
        error: nullable("string"),
      },
    },
  };
}

/** GET /api/v1/runs query parameters, one per key of the filter schema, each with its own JSON Schema. */
export function runFilterParameters() {
  const json = fromZod(runFiltersSchema) as { properties: Record<string, JsonSchema> };
  const notes: Record<string, string> = {
    table: "Equipment id of a table.",
    technician: "User id of the technician who logged the run.",
    state: "Run state.",
    verdict: "Latest theory check's verdict; none = no check yet.",
    from: "Logged on or after this day (YYYY-MM-DD, lab time).",
    to: "Logged on or before this day (YYYY-MM-DD, lab time).",
    q: "Text in the purpose or notes (case-insensitive, literal).",
    sort: "Field to sort by.",
    dir: "Sort direction.",
    page: "Page number from 1; past the last page is a 400.",
    pageSize: "Runs per page.",
  };
  return Object.entries(json.properties).map(([name, schema]) => ({
    name,
    in: "query",
    required: false,
    description: notes[name],
    schema,
  }));
}
