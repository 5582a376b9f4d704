import type { OpenAPIRegistry } from "@asteasolutions/zod-to-openapi";
import { z } from "../zod";
import { badBody, error, file, ids, json, notJson, operation, routeSchema } from "./helpers";
import { runDetailSchema, runPageSchema, runSchema, viewSetupSchema as viewSetupAnswer } from "../responses/runs";
import { runExportSchema } from "../responses/run-export";
import { errorSchema } from "../responses/common";
import {
  frameRemovalSchema as frameRemovalAnswer,
  frameStackSchema,
  frameUploadRefusedSchema,
  frameUploadSchema,
  trackingJobAnswerSchema,
  trackingSchema,
} from "../responses/tracking";
import { runApiCreateSchema, runApiPatchSchema } from "~/lib/validation/run-api";
import { viewSetupApiSchema } from "~/lib/validation/view-setup-api";
import { runFiltersSchema } from "~/lib/validation/run-filters";
import { frameRemovalSchema } from "~/lib/validation/frame-removal";
import { frameUploadQuerySchema } from "~/lib/validation/frame-upload";
import { uploadLimits } from "~/lib/upload-limits";

const tags = ["Runs"];
const noRun = error("No such run (not_found).");
const writers = error("Only a technician or a lab manager, and for a change the run's own technician or a lab manager (forbidden).");
const signedOff = "run_signed_off: the run is signed off and read-only; log a correction instead";
const notPossible = error(
  "conditions_not_possible: the body is well-formed but the lab's register refuses it (above the table's rated rate, deeper than the tank, a rate-reached time in the future or after the first frame); error.issues names the fields.",
);

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

export const viewSetupExample = {
  centre: { x: 320.5, y: 181 },
  tankEdge: { x: 320, y: 180, r: 168 },
  mirrored: false,
  knownPoints: [
    { x: 440.2, y: 180.4, tableXCm: 10, tableYCm: 0 },
    { x: 320.6, y: 62.3, tableXCm: 0, tableYCm: 10 },
    { x: 200.9, y: 181.2, tableXCm: -10, tableYCm: 0 },
    { x: 320.4, y: 296.8, tableXCm: 0, tableYCm: -10 },
  ],
};

export function registerRunPaths(registry: OpenAPIRegistry) {
  const create = registry.register("RunCreate", routeSchema(runApiCreateSchema));
  const setup = registry.register("ViewSetupPut", routeSchema(viewSetupApiSchema));
  const patch = registry.register("RunPatch", routeSchema(runApiPatchSchema));
  operation(registry, {
    method: "get",
    path: "/api/v1/runs",
    operationId: "listRuns",
    tags,
    summary: "Runs, filtered, sorted and paged by the server",
    description: "The same query as the runs table's address: copy a filtered view's search parameters here.",
    request: { query: routeSchema(runFiltersSchema) },
    responses: {
      200: json(runPageSchema, "One page"),
      400: error("Unknown filter or sort field, malformed date, page out of range (invalid_filter, with field)."),
    },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/runs",
    operationId: "createRun",
    tags,
    summary: "Log a run (technician, lab manager)",
    description:
      "With supersedesId the run is a correction of that signed-off run. It starts with the corrected run's frames (the same stored files, shared, nothing to upload; leaveFramesOut: true starts without them), a copy of its view setup, and its rate reached time when the body gives none; each can be changed on the new run afterwards. A correction that starts with at least 3 frames and a view setup is queued for tracking at once (its frames state), and its theory check follows the tracks: GET /api/v1/runs/{id}/tracking shows the job.",
    request: { body: { required: true, content: { "application/json": { schema: create, example: runCreateExample } } } },
    responses: {
      201: json(runSchema, "The run as logged: in state draft, or frames_in for a correction that starts with frames"),
      400: badBody(),
      403: writers,
      404: error("The run it corrects does not exist (not_found, field supersedesId)."),
      409: error("not_signed_off: supersedesId names a run that is not signed off; change that run instead (field supersedesId)."),
      415: notJson,
      422: error(
        "conditions_not_possible: the body is well-formed but the lab's register refuses it (above the table's rated rate, deeper than the tank, a rate-reached time in the future or after the first frame, leaveFramesOut without supersedesId); error.issues names the fields.",
      ),
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/runs/{id}",
    operationId: "getRun",
    tags,
    summary: "The run record",
    request: { params: ids("id") },
    responses: { 200: json(runDetailSchema, "The run"), 404: noRun },
  });
  operation(registry, {
    method: "patch",
    path: "/api/v1/runs/{id}",
    operationId: "updateRun",
    tags,
    summary: "Change some of a run's conditions (its technician or a lab manager)",
    description: "The fields are merged over the stored run and checked as a whole; every change is kept in the run's history.",
    request: { params: ids("id"), body: { required: true, content: { "application/json": { schema: patch, example: runPatchExample } } } },
    responses: {
      200: json(runSchema, "The run after the change"),
      400: badBody(),
      403: writers,
      404: noRun,
      409: error(`${signedOff}.`),
      415: notJson,
      422: notPossible,
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/runs/{id}/tracks.csv",
    operationId: "getRunTracksCsv",
    tags,
    summary: "The run's tracks as CSV",
    description:
      "One row a point: track (the track's number in the run, as tracks.items[].number), t_s, x_px, y_px, and x_m, y_m in the rotating frame (origin on the axis, y up, seen from above) when the view setup has a scale.",
    request: { params: ids("id") },
    responses: {
      200: file("text/csv", "CSV", "track,t_s,x_px,y_px,x_m,y_m\r\n1,0,640.5,360.25,0.0412,-0.0107\r\n"),
      404: noRun,
      409: error("The run has no tracks yet (no_tracks)."),
    },
  });
  operation(registry, {
    method: "put",
    path: "/api/v1/runs/{id}/view-setup",
    operationId: "putViewSetup",
    tags,
    summary: "Set up the run's view (its technician or a lab manager)",
    description:
      "The whole view setup in the frame's pixels, checked as the setup page checks it; it replaces the run's setup, and a changed setup makes the run's tracks and check out of date. A camera not quite overhead is corrected from rimPoints (five or more, where the water meets the tank wall) or knownPoints (four or more marks with their place on the table in cm from the rotation axis, x and y a right-handed pair seen from above), not both; the correction holds for the height of the marks, which should be the height the tracer moves at.",
    request: { params: ids("id"), body: { required: true, content: { "application/json": { schema: setup, example: viewSetupExample } } } },
    responses: {
      200: json(viewSetupAnswer, "The view setup as saved, with the tilt correction its marks give"),
      400: badBody(),
      403: writers,
      404: noRun,
      409: error(`no_frames: the run has no frames yet, so no frame size to mark in; or ${signedOff}.`),
      415: notJson,
      422: error(
        "setup_not_usable: the body is well-formed but its marks are refused (outside the frame, an incomplete tank edge or scale, tilt marks too few, repeated, in a line, both kinds at once, or implying more than 25° of lean); error.issues names the fields. Nothing saved is changed.",
      ),
    },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/runs/{id}/sign-off",
    operationId: "signOffRun",
    tags,
    summary: "Sign a run off (lab manager)",
    description: "Vouches for the run's current theory check; afterwards the run is read-only and a correction is logged as a new run.",
    request: { params: ids("id") },
    responses: {
      200: json(runSchema, "The run, signed off"),
      403: error("Only a lab manager signs off (forbidden)."),
      404: noRun,
      409: error("check_out_of_date (the check is out of date or missing), not_checked, or run_signed_off (already signed off)."),
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/runs/{id}/export.json",
    operationId: "exportRun",
    tags,
    summary: "Everything needed to reproduce the run's result",
    request: { params: ids("id") },
    responses: { 200: json(runExportSchema, "The export (as a download)"), 404: noRun },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/runs/{runId}/frames",
    operationId: "listFrames",
    tags,
    summary: "The run's frame stack",
    request: { params: ids("runId") },
    responses: { 200: json(frameStackSchema, "The frames in order"), 404: noRun },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/runs/{runId}/frames",
    operationId: "uploadFrames",
    tags,
    summary: "Upload one frame, or a ZIP of frames (technician, lab manager)",
    description:
      "Say what the upload is with kind: frame (one image, the default; a file of at most 30 MiB) or zip (a ZIP of images; at most 400 MiB). The body may be the file plus 64 KiB of multipart framing; a Content-Length over that is refused with 413 before any of the body is read, and a body without one is cut off at the limit. The file is judged by its content either way: a ZIP sent as a frame is taken when it fits the frame limit.",
    request: {
      params: ids("runId"),
      query: routeSchema(frameUploadQuerySchema),
      body: {
        required: true,
        content: {
          "multipart/form-data": {
            schema: z.strictObject({
              file: z.string().openapi({ format: "binary", description: "JPEG, PNG, TIFF or WebP image, or a ZIP of them; checked by content." }),
              timeS: z.number().min(0).optional().openapi({ description: "The frame's own time in s, for a frame cut from a video." }),
              frameNumber: z.int().min(1).optional().openapi({
                description:
                  "With expectedFrames: this frame's 1-based place in the finished stack (by time, else by file name). The frame is then searched for the tracer as it lands.",
              }),
              expectedFrames: z.int().min(3).max(uploadLimits.maxFramesPerRun).optional().openapi({
                description:
                  "With frameNumber: how many frames the finished stack will have. The upload that brings the stack to this count starts tracking when the run has a view setup. Send the frames the still background is made of first (the frames at 0-based places round(i·(N−1)/20), i = 0…20, for N ≥ 21) so the others can be searched as they land.",
              }),
              carryOverSetup: z.enum(["yes"]).optional().openapi({
                description:
                  "A run without a view setup takes a copy of the camera's last view setup made on frames of this size (the answer's setupCarriedOver says whether it did), so that frames can be searched as they land.",
              }),
            }),
          },
        },
      },
    },
    responses: {
      200: json(frameUploadSchema, "Every file was already in the stack"),
      201: json(frameUploadSchema, "Accepted and rejected files"),
      400: error(
        "No file field (missing_file), a bad timeS (invalid_time), a bad or half frameNumber/expectedFrames pair (invalid_stream), a carryOverSetup other than yes (invalid_carry_over), unreadable multipart (invalid_multipart), or a kind other than frame or zip, or given twice (invalid_input).",
      ),
      403: writers,
      404: noRun,
      409: error(`${signedOff}.`),
      413: error(
        "too_large: the declared or the received body is over the kind's limit (before the body is read when Content-Length says so), or a ZIP with too many entries.",
      ),
      415: error("Not multipart/form-data (unsupported_media_type)."),
      422: json(
        z.union([frameUploadRefusedSchema, errorSchema]),
        "No frame was accepted (no_frames_accepted, with what happened to each file), or a damaged image or ZIP.",
      ),
      503: error("The file store cannot be reached (storage_unavailable)."),
    },
  });
  const removal = registry.register("FrameRemovalRequest", routeSchema(frameRemovalSchema));
  operation(registry, {
    method: "delete",
    path: "/api/v1/runs/{runId}/frames",
    operationId: "removeFrames",
    tags,
    summary: "Remove one frame, a range or the whole stack before sign-off (the run's technician, lab manager)",
    description:
      "Positions are 0-based as GET …/frames gives them, both ends included; { all: true } removes the whole stack. Send frameCount (the number of frames you saw) to be refused with stack_changed instead of removing other frames when the stack has changed since. The frames after the gap move up; their files are removed from storage; the tracks and the theory check go out of date and a tracked run is tracked again, which makes a new check. The view setup, the conditions and earlier checks stay.",
    request: {
      params: ids("runId"),
      body: { required: true, content: { "application/json": { schema: removal, example: { from: 11, to: 11, frameCount: 90 } } } },
    },
    responses: {
      200: json(frameRemovalAnswer, "The frames removed and the count left"),
      400: badBody("out_of_range: a position past the end of the stack (field to)"),
      403: writers,
      404: noRun,
      409: error(
        `${signedOff}; job_active: tracking is working on the frames now; stack_changed: the stack no longer has frameCount frames; no_frames: there is nothing to remove.`,
      ),
      415: notJson,
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/runs/{runId}/tracking",
    operationId: "getTracking",
    tags,
    summary: "Progress of the latest tracking job, and the tracks found",
    request: { params: ids("runId") },
    responses: { 200: json(trackingSchema, "The job and the tracks"), 404: noRun },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/runs/{runId}/tracking",
    operationId: "startTracking",
    tags,
    summary: "Start tracking (technician, lab manager)",
    request: { params: ids("runId") },
    responses: {
      202: json(trackingJobAnswerSchema, "The queued job"),
      403: writers,
      404: noRun,
      409: error("Already running (job_active), no frames or no view setup, or signed off."),
    },
  });
  operation(registry, {
    method: "delete",
    path: "/api/v1/runs/{runId}/tracking",
    operationId: "cancelTracking",
    tags,
    summary: "Cancel the queued or running job",
    request: { params: ids("runId") },
    responses: { 200: json(trackingJobAnswerSchema, "The cancelled job"), 403: writers, 404: noRun, 409: error("Nothing to cancel.") },
  });
}
