import { z } from "../zod";
import { errorSchema, isoTime, isoTimeOrNull } from "./common";
import { runStates } from "~/lib/runs";

export const trackingJobSchema = z
  .strictObject({
    id: z.number().int(),
    state: z.enum(["queued", "running", "done", "failed", "cancelled"]),
    framesDone: z.number().int(),
    framesTotal: z.number().int(),
    percent: z.number(),
    error: z.string().nullable(),
    startedAt: isoTimeOrNull(),
    finishedAt: isoTimeOrNull(),
    createdAt: isoTime(),
  })
  .openapi("TrackingJob");
export type TrackingJobView = z.infer<typeof trackingJobSchema>;

export const trackingSchema = z
  .strictObject({
    runId: z.number().int(),
    runState: z.enum(runStates),
    job: trackingJobSchema.nullable(),
    checkAwaited: z
      .boolean()
      .openapi({ description: "The job is done and the theory check that follows it has not been made yet; poll again for the verdict." }),
    tracks: z.array(
      z.strictObject({
        id: z.number().int(),
        number: z.number().int(),
        points: z.number().int(),
        detectedShare: z.number().nullable(),
        jitterPx: z.number().nullable(),
      }),
    ),
  })
  .openapi("Tracking");

export const trackingJobAnswerSchema = z.strictObject({ job: trackingJobSchema }).openapi("TrackingJobAnswer");

export const frameStackSchema = z
  .strictObject({
    frameCount: z.number().int(),
    width: z.number().int().nullable(),
    height: z.number().int().nullable(),
    frames: z.array(
      z.strictObject({
        id: z.number().int(),
        position: z.number().int(),
        name: z.string(),
        timeS: z.number().nullable(),
        format: z.string(),
        sizeBytes: z.number().int(),
      }),
    ),
  })
  .openapi("FrameStack");

const uploadResultFields = {
  accepted: z.array(
    z.strictObject({
      name: z.string(),
      frameId: z.number().int(),
      position: z.number().int(),
      duplicate: z.boolean(),
      restored: z.boolean().optional().openapi({ description: "A duplicate whose stored file had gone missing, put back from this upload." }),
    }),
  ),
  rejected: z.array(z.strictObject({ name: z.string(), message: z.string() })),
  frameCount: z.number().int(),
};
export const frameUploadSchema = z
  .strictObject({
    ...uploadResultFields,
    setupCarriedOver: z
      .union([
        z.strictObject({ carried: z.literal(true), fromRunId: z.number().int() }),
        z.strictObject({ carried: z.literal(false), message: z.string(), alreadySet: z.boolean().optional() }),
      ])
      .optional()
      .openapi({
        description:
          "Only when the upload sent carryOverSetup=yes: whether the run, having no view setup, took a copy of the camera's last one (made on frames of the same size), and from which run; or why not.",
      }),
  })
  .openapi("FrameUpload");
export type FrameUploadView = z.infer<typeof frameUploadSchema>;

/** 422 no_frames_accepted: the error, and what happened to each file. */
export const frameUploadRefusedSchema = z.strictObject({ error: errorSchema.shape.error, ...uploadResultFields }).openapi("FrameUploadRefused");
export type FrameUploadRefusedView = z.infer<typeof frameUploadRefusedSchema>;
export type FrameStackView = z.infer<typeof frameStackSchema>;

export const frameRemovalSchema = z
  .strictObject({
    removed: z.array(
      z.strictObject({ id: z.number().int(), position: z.number().int().openapi({ description: "Its position before the removal." }), name: z.string() }),
    ),
    frameCount: z.number().int().openapi({ description: "Frames left; they are numbered 0 … frameCount − 1 again, in the order they had." }),
    retracking: z.boolean().openapi({
      description: "Tracking was queued again (the run had been tracked, and a view setup and at least 3 frames remain); it ends in a new theory check.",
    }),
  })
  .openapi("FrameRemoval");
export type FrameRemovalView = z.infer<typeof frameRemovalSchema>;
export type TrackingView = z.infer<typeof trackingSchema>;
