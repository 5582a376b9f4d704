import { z } from "../zod";
import { isoTime } from "./common";
import { equipmentSchema } from "./equipment";
import { trackingJobSchema } from "./tracking";
import {
  calibrationRecordAtRunSchema,
  checkOutOfDateSchema,
  runConditionsSchema,
  runDetailSchema,
  runLinkSchema,
  signOffSchema,
  theoryCheckSummarySchema,
  trackSummarySchema,
  viewSetupSchema,
} from "./runs";
import { runStates, verdicts } from "~/lib/runs";

const detail = runDetailSchema.shape;

/** export.json: everything needed to reproduce the run's result, stamped with the code that made it. */
export const runExportSchema = z
  .strictObject({
    format: z.literal("tankside-run-export"),
    formatVersion: z.literal(1),
    exportedAt: isoTime(),
    codeVersion: z.string().openapi({ description: "package version, plus +<git commit> when built from a checkout." }),
    run: z.strictObject({
      id: z.number().int(),
      label: z.string(),
      state: z.enum(runStates),
      verdict: z.enum(verdicts).nullable(),
      checkStatus: detail.checkStatus,
      checkOutOfDate: checkOutOfDateSchema,
      purpose: z.string(),
      notes: z.string().nullable(),
      createdAt: isoTime(),
      technician: detail.technician,
      supersedes: runLinkSchema.nullable(),
      supersededBy: z.array(runLinkSchema),
      signOff: signOffSchema,
    }),
    conditions: runConditionsSchema,
    equipment: z.strictObject({ table: equipmentSchema.nullable(), tank: equipmentSchema.nullable(), camera: equipmentSchema.nullable() }),
    frames: detail.frames,
    viewSetup: viewSetupSchema.nullable(),
    calibrationIdsInForce: z.array(z.number().int()),
    calibrationsInForce: z.array(calibrationRecordAtRunSchema),
    calibrationsApplied: z
      .unknown()
      .openapi({ description: "What the latest check did with each calibration, in words; null for a check made before this was recorded." }),
    tracks: z.strictObject({ count: z.number().int(), items: z.array(trackSummarySchema) }),
    trackingJob: trackingJobSchema.nullable(),
    settings: z
      .strictObject({ used: z.unknown(), requested: z.unknown() })
      .nullable()
      .openapi({ description: "used: the smoothing window, order and tolerance the check applied; requested: what was asked for." }),
    theoryCheckInput: z.unknown().openapi({
      description: "The check's inputs: view setup, set and calibrated rate, camera mode, t₀, settings, track points; null without a current check.",
    }),
    theoryCheck: z
      .strictObject({ ...theoryCheckSummarySchema.shape, result: z.unknown().openapi({ description: "The stored check: { result, input }." }) })
      .nullable()
      .openapi({ description: "The current theory check only; null while it is out of date (run.checkStatus says which)." }),
    tracksCsv: z.string().openapi({ description: "Where the tracks are as CSV." }),
  })
  .openapi("RunExport");
export type RunExportView = z.infer<typeof runExportSchema>;
