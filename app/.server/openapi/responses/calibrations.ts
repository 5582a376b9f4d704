import { z } from "../zod";
import { isoTime, isoTimeOrNull } from "./common";
import { calibrationKinds } from "~/lib/calibrations";

export const calibrationAttachmentSchema = z
  .strictObject({ id: z.number().int(), originalName: z.string(), contentType: z.string(), sizeBytes: z.number().int(), url: z.string() })
  .openapi("CalibrationAttachment");
export type CalibrationAttachmentView = z.infer<typeof calibrationAttachmentSchema>;

const num = () => z.number().nullable();
const day = () => z.iso.date();

/** A calibration record with its computed result and its standing now; fields of other kinds are null. */
export const calibrationSchema = z
  .strictObject({
    id: z.number().int(),
    kind: z.enum(calibrationKinds),
    equipmentId: z.number().int(),
    equipmentName: z.string(),
    meterId: z.number().int().nullable(),
    meterName: z.string().nullable(),
    performedById: z.number().int(),
    performedByName: z.string(),
    performedOn: day(),
    performedAt: isoTime(),
    dueOn: day(),
    dueAt: isoTime(),
    notes: z.string().nullable(),
    readings: z.array(z.strictObject({ setRpm: z.number(), measuredRpm: z.number() })).nullable(),
    slope: num(),
    interceptRpm: num(),
    slopeStdError: num(),
    interceptStdErrorRpm: num(),
    slopeInterceptCovarianceRpm: num(),
    residualSdRpm: num(),
    maxResidualRpm: num(),
    maxDeviationRpm: num(),
    maxDeviationPct: num(),
    tolerancePct: num(),
    passed: z.boolean().nullable(),
    knownLengthM: num(),
    knownLengthUncertaintyM: num(),
    lengthPx: num(),
    lengthUncertaintyPx: num(),
    scalePxPerM: num(),
    scaleUncertaintyPxPerM: num(),
    nominalFrameRateFps: num(),
    frameIntervals: num(),
    frameIntervalsUncertainty: num(),
    referenceElapsedS: num(),
    referenceElapsedUncertaintyS: num(),
    trueFrameRateFps: num(),
    trueFrameRateUncertaintyFps: num(),
    frameRateDeviationPct: num(),
    signedOffById: z.number().int().nullable(),
    signedOffByName: z.string().nullable(),
    signedOffAt: isoTimeOrNull(),
    standing: z.enum(["draft", "in_force", "superseded", "past_due"]),
    reminder: z
      .strictObject({ state: z.enum(["queued", "sent", "failed"]), sentAt: isoTimeOrNull(), lastError: z.string().nullable(), attempts: z.number().int() })
      .nullable()
      .openapi({ description: "The due-date reminder e-mail, once one was queued." }),
    attachments: z.array(calibrationAttachmentSchema),
  })
  .openapi("Calibration");
export type CalibrationView = z.infer<typeof calibrationSchema>;

export const calibrationListSchema = z.array(calibrationSchema);
