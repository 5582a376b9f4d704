import { Frame, type Run } from "../db";
import type { FrameUploadResult } from "../uploads/frames";
import type { FrameStreamDeclaration } from "~/lib/frame-stream";
import { frameLanded } from "./frame-stream";
import { enqueueTracking, JobError } from "./tracking-queue";

/**
 * After an accepted upload that declared its place in a stream (Decision 61): the frame goes to
 * the run's streaming tracker, and the upload that brings the stack to the declared length starts
 * the tracking job, which fits as soon as the last searches are stored. A run that cannot be
 * tracked yet (no view setup, a job already queued) is left as it is: the technician starts
 * tracking as before.
 */
export async function streamedUpload(run: Run, result: FrameUploadResult, declared: FrameStreamDeclaration | null, userId: number) {
  if (!declared) return;
  const single = result.accepted.length === 1 ? result.accepted[0] : undefined;
  if (single) {
    const frame = await Frame.findByPk(single.frameId, { attributes: ["id", "sha256"] });
    if (frame) frameLanded(run.id, { id: frame.id, sha256: frame.sha256 }, declared);
  }
  if (result.frameCount < declared.expectedFrames) return;
  try {
    await enqueueTracking(run, userId);
  } catch (err) {
    if (!(err instanceof JobError)) throw err;
  }
}
