import type { Route } from "./+types/run-frames";
import { requireRole, requireUser } from "~/.server/auth/permissions";
import { apiError, readJson } from "~/.server/http";
import { loadRun, requireChangeable } from "~/.server/runs/access";
import { receiveFrameFile, UploadError } from "~/.server/uploads/frames";
import { withMultipartUpload } from "~/.server/uploads/staging";
import { StorageUnavailableError } from "~/.server/storage";
import { storageUnavailable } from "~/.server/storage/respond";
import { Frame } from "~/.server/db";
import { inputsChanged } from "~/.server/runs/rechecks";
import { maxUploadBodyBytes, maxUploadFileBytes, uploadLimits, type FrameUploadKind } from "~/lib/upload-limits";
import { frameUploadQueryKeys, frameUploadQuerySchema } from "~/lib/validation/frame-upload";
import { parseQueryFilters } from "~/lib/validation/query-filters";
import { parseFrameTime } from "~/lib/video-frames";
import { parseFrameStream } from "~/lib/frame-stream";
import { streamedUpload } from "~/.server/jobs/stream-upload";
import type { FrameRemovalView, FrameStackView, FrameUploadRefusedView, FrameUploadView } from "~/.server/openapi/responses/tracking";
import { carrySetupOver } from "~/.server/runs/setup-carry-over";
import { removeFrameSelection } from "~/.server/runs/frame-removal";
import { runErrorResponse } from "~/.server/runs/api";
import { invalidInput } from "~/.server/api-responses";
import { frameRemovalSchema, selectionOf } from "~/lib/validation/frame-removal";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.runId);
  const frames = await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] });
  const stack: FrameStackView = {
    frameCount: frames.length,
    width: run.frameWidthPx,
    height: run.frameHeightPx,
    frames: frames.map((f) => ({ id: f.id, position: f.position, name: f.originalName, timeS: f.timeS, format: f.format, sizeBytes: f.sizeBytes })),
  };
  return Response.json(stack);
}

/**
 * POST: one file per request (Uppy sends each file on its own), an image or a ZIP of images.
 * DELETE: removes one frame, a range or the whole stack before sign-off (see runs/frame-removal).
 */
export async function action({ request, params }: Route.ActionArgs) {
  if (request.method === "DELETE") return remove(request, params.runId);
  if (request.method !== "POST") return apiError(405, "method_not_allowed", "Send frames with POST, or remove them with DELETE.");
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, params.runId);
  await requireChangeable(request, run, user);

  if (!(request.headers.get("Content-Type") ?? "").includes("multipart/form-data")) {
    return apiError(415, "unsupported_media_type", "Send the frame as multipart/form-data with the field `file`.");
  }
  // What the upload says it is picks its limit; a declared length over it is refused unread.
  const query = parseQueryFilters(new URL(request.url).searchParams, frameUploadQuerySchema, frameUploadQueryKeys);
  if (!query.ok) return apiError(400, "invalid_input", query.message, { issues: [{ field: query.field ?? "kind", message: query.message }] });
  const { kind } = query.filters;
  const tooLarge = uploadTooLarge(kind);
  if (Number(request.headers.get("Content-Length") ?? 0) > maxUploadBodyBytes(kind)) return apiError(413, tooLarge.code, tooLarge.message);
  const limits = {
    maxFileBytes: maxUploadFileBytes(kind),
    tooLarge,
    unreadable: new UploadError("The upload could not be read as multipart form data.", 400, "invalid_multipart"),
  };
  try {
    // Streamed to a temporary file and checked from there; it is gone again when this returns.
    return await withMultipartUpload(request, limits, async ({ file, fields }) => {
      if (!file) return apiError(400, "missing_file", "Put the frame in the multipart field `file`.");
      // A frame cut from a video carries its own time; stills without one are spaced by the frame rate.
      const time = parseFrameTime(fields.timeS ?? null);
      if (!time.ok) return apiError(400, "invalid_time", time.message);
      // A client streaming a stack says where this frame belongs and how many will come (Decision 61).
      const stream = parseFrameStream(fields.frameNumber ?? null, fields.expectedFrames ?? null);
      if (!stream.ok) return apiError(400, "invalid_stream", stream.message);
      // Opt-in: a run without a view setup takes the camera's last one (Decision 67), before the frame is streamed.
      const carryOver = fields.carryOverSetup ?? "";
      if (carryOver !== "" && carryOver !== "yes") return apiError(400, "invalid_carry_over", 'carryOverSetup is "yes" or left out.');
      try {
        const result = await receiveFrameFile(run, file, time.timeS);
        if (result.accepted.length === 0 && result.rejected.length > 0) {
          const refused: FrameUploadRefusedView = {
            error: { code: "no_frames_accepted", message: result.rejected[0]?.message ?? "No frame was accepted." },
            ...result,
          };
          return Response.json(refused, { status: 422 });
        }
        const allDuplicates = result.accepted.length > 0 && result.accepted.every((a) => a.duplicate);
        // New frames make a checked run's tracks and check out of date: track again.
        if (!allDuplicates && result.accepted.length) await inputsChanged(run.id, user.id, "track");
        const setupCarriedOver = carryOver === "yes" && result.accepted.length ? await carrySetupOver(run.id, user.id) : undefined;
        await streamedUpload(run, result, stream.declared, user.id);
        const answer: FrameUploadView = setupCarriedOver ? { ...result, setupCarriedOver } : result;
        return Response.json(answer, { status: allDuplicates ? 200 : 201 });
      } catch (err) {
        if (err instanceof UploadError) return apiError(err.status, err.code, `${file.name}: ${err.message}`);
        throw err;
      }
    });
  } catch (err) {
    if (err instanceof UploadError) return apiError(err.status, err.code, err.message);
    if (err instanceof StorageUnavailableError) return storageUnavailable(err);
    throw err;
  }
}

/** The refusal of an upload over its kind's limit; a frame's says how to send a ZIP instead. */
function uploadTooLarge(kind: FrameUploadKind) {
  return kind === "zip"
    ? new UploadError(`A ZIP of frames may be at most ${uploadLimits.maxZipBytes / 1024 / 1024} MiB.`, 413, "too_large")
    : new UploadError(
        `One frame may be at most ${uploadLimits.maxFrameBytes / 1024 / 1024} MiB. A ZIP of frames is sent with ?kind=zip (at most ${uploadLimits.maxZipBytes / 1024 / 1024} MiB).`,
        413,
        "too_large",
      );
}

async function remove(request: Request, runId: string) {
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, runId);
  await requireChangeable(request, run, user);
  const body = frameRemovalSchema.safeParse(await readJson(request));
  if (!body.success) return invalidInput(body.error);
  try {
    const result: FrameRemovalView = await removeFrameSelection(run.id, user, selectionOf(body.data), { frameCount: body.data.frameCount });
    return Response.json(result);
  } catch (err) {
    return runErrorResponse(err);
  }
}
