import { z } from "../zod";
import { isoTime, isoTimeOrNull, namedSchema } from "./common";
import { equipmentSchema } from "./equipment";
import { calibrationKinds } from "~/lib/calibrations";
import { runStates, verdicts } from "~/lib/runs";
import { trackingJobSchema } from "./tracking";

const runState = z.enum(runStates);
const verdict = z.enum(verdicts).nullable();
const direction = z.enum(["ccw", "cw"]);
const cameraMode = z.enum(["rotating", "lab"]);
const tracer = z.enum(["float", "dye"]);
const label = z.string().openapi({ examples: ["R-0042"] });
const person = z.strictObject({ id: z.number().int(), name: z.string() });

/** The run as POST/PATCH /api/v1/runs and sign-off answer it: stored columns, SI units as named. */
export const runSchema = z
  .strictObject({
    id: z.number().int(),
    label,
    state: runState,
    verdict,
    tableId: z.number().int(),
    tankId: z.number().int(),
    cameraId: z.number().int(),
    setRateRpm: z.number(),
    direction,
    waterDepthM: z.number(),
    waterTemperatureC: z.number(),
    rateReachedAt: isoTimeOrNull(),
    cameraMode,
    frameRateFps: z.number(),
    tracer,
    purpose: z.string(),
    notes: z.string().nullable(),
    technicianId: z.number().int(),
    supersedesId: z.number().int().nullable(),
    signedOffById: z.number().int().nullable(),
    signedOffAt: isoTimeOrNull(),
    frameCount: z.number().int(),
    createdAt: isoTime(),
    updatedAt: isoTime(),
  })
  .openapi("Run");
export type RunView = z.infer<typeof runSchema>;

export const runListItemSchema = z
  .strictObject({
    id: z.number().int(),
    label,
    createdAt: isoTime(),
    state: runState,
    verdict,
    table: namedSchema,
    tank: namedSchema,
    camera: namedSchema,
    technician: namedSchema,
    setRateRpm: z.number(),
    direction,
    waterDepthM: z.number(),
    waterTemperatureC: z.number(),
    cameraMode,
    tracer,
    frameCount: z.number().int(),
    purpose: z.string(),
    signedOffAt: isoTimeOrNull(),
    supersedesId: z.number().int().nullable(),
  })
  .openapi("RunListItem");
export type RunListItemView = z.infer<typeof runListItemSchema>;

export const runPageSchema = z
  .strictObject({ items: z.array(runListItemSchema), total: z.number().int(), page: z.number().int(), pageSize: z.number().int(), pageCount: z.number().int() })
  .openapi("RunPage");

export const runLinkSchema = z.strictObject({ id: z.number().int(), label, state: runState, createdAt: isoTime() }).openapi("RunLink");
export type RunLinkView = z.infer<typeof runLinkSchema>;

export const runHistoryEntrySchema = z
  .strictObject({
    id: z.number().int(),
    at: isoTime(),
    who: person.nullable(),
    field: z.string(),
    fieldLabel: z.string(),
    oldValue: z.string().nullable(),
    newValue: z.string().nullable(),
  })
  .openapi("RunHistoryEntry");
export type RunHistoryEntryView = z.infer<typeof runHistoryEntrySchema>;

export const runConditionsSchema = z.strictObject({
  setRateRpm: z.number(),
  direction,
  waterDepthM: z.number(),
  waterTemperatureC: z.number(),
  rateReachedAt: isoTimeOrNull(),
  cameraMode,
  frameRateFps: z.number(),
  tracer,
});

export const viewSetupSchema = z
  .strictObject({
    id: z.number().int(),
    cameraId: z.number().int(),
    centrePx: z.strictObject({ x: z.number(), y: z.number() }),
    tankEdgePx: z.strictObject({ x: z.number(), y: z.number(), r: z.number() }).nullable(),
    scalePxPerM: z.number().nullable(),
    scalePoints: z.unknown().openapi({ description: "The points the scale was measured between, as the view setup stored them (or null)." }),
    mirrored: z.boolean(),
    rimPoints: z
      .array(z.strictObject({ x: z.number(), y: z.number() }))
      .nullable()
      .openapi({ description: "A camera not quite overhead: points on the tank's edge at the water's surface, image px (five or more), or null." }),
    knownPoints: z
      .array(z.strictObject({ x: z.number(), y: z.number(), tableXCm: z.number(), tableYCm: z.number() }))
      .nullable()
      .openapi({ description: "…or points whose place on the table is known: image px and cm from the rotation axis (four or more), or null." }),
    tiltCorrection: z
      .strictObject({
        method: z.enum(["rim ellipse", "known points"]),
        tiltDeg: z.number().openapi({ description: "How far the camera's axis leans off the table's normal, degrees, read at the rotation centre." }),
        towardDeg: z
          .number()
          .openapi({ description: "The side of the frame it leans towards: degrees counter-clockwise from the frame's right, up positive." }),
        sideKnown: z.boolean(),
        residualPx: z.number().openapi({ description: "RMS distance of the marks from the fitted ellipse or map, px." }),
      })
      .nullable()
      .openapi({ description: "What the tilt marks give; positions are corrected by it before the theory check. Null without marks." }),
    updatedAt: isoTime(),
  })
  .openapi("ViewSetup");

export const trackSummarySchema = z.strictObject({
  id: z.number().int(),
  number: z.number().int(),
  jobId: z.number().int(),
  pointCount: z.number().int(),
  detectedShare: z.number().nullable(),
  jitterPx: z.number().nullable(),
});

const trackNumber = z
  .number()
  .int()
  .nullable()
  .openapi({ description: "The track's number in its run (as tracks.items[].number); null in a check made before tracks were numbered in it." });

export const trackCheckSchema = z
  .strictObject({
    trackNumber,
    verdict: z.enum(verdicts),
    fMeasuredPerS: z.number().nullable(),
    fStdErrorPerS: z.number().nullable(),
    dragPerS: z.number().nullable(),
    dragStdErrorPerS: z.number().nullable(),
    nPoints: z.number().int(),
    combined: z.boolean().openapi({ description: "Whether its f went into the combined estimate (a track too short or too noisy to fit does not)." }),
    pull: z.number().nullable().openapi({ description: "(f − f combined)/its standard error; null when left out or alone." }),
    flagged: z.boolean().openapi({ description: "It disagrees with the other tracks beyond its error." }),
    reason: z.string(),
  })
  .openapi("TrackCheck");

export const trackCombinationSchema = z
  .strictObject({
    n: z.number().int().openapi({ description: "Tracks combined." }),
    of: z.number().int().openapi({ description: "Tracks checked." }),
    representativeTrack: z.number().int().openapi({ description: "The track whose plots, circle and drag the combined check carries." }),
    fMeanPerS: z.number().openapi({ description: "Inverse-variance weighted mean of the combined tracks' f." }),
    stdErrorPerS: z.number().openapi({ description: "Its standard error from the fits, before widening." }),
    chi2: z.number(),
    dof: z.number().int(),
    birgeRatio: z.number().nullable().openapi({ description: "√(χ²/(n − 1)); null for one track." }),
    pValue: z.number().nullable(),
    scale: z.number().openapi({ description: "What the standard error was multiplied by: the Birge ratio when above 1, else 1." }),
    consistent: z.boolean(),
    words: z.string(),
  })
  .openapi("TrackCombination");

export const theoryCheckSummarySchema = z
  .strictObject({
    id: z.number().int(),
    trackId: z.number().int().nullable(),
    trackNumber,
    verdict: z.enum(verdicts),
    fMeasuredPerS: z.number().nullable(),
    fPredictedPerS: z.number().nullable(),
    checks: z.array(trackCheckSchema).openapi({ description: "Every track's own check; the verdict above is the combined one." }),
    combination: trackCombinationSchema
      .nullable()
      .openapi({ description: "How the tracks were combined; null when none could be fitted, or for a check made before every track was checked." }),
    codeVersion: z.string(),
    createdAt: isoTime(),
  })
  .openapi("TheoryCheck");
export type TheoryCheckView = z.infer<typeof theoryCheckSummarySchema>;

export const checkOutOfDateSchema = z
  .strictObject({
    because: z.array(z.string()).openapi({ description: "The inputs changed since the latest check, in words." }),
    recheckPending: z.boolean(),
    checkId: z.number().int().nullable(),
  })
  .nullable()
  .openapi({ description: "Set when checkStatus is out_of_date." });

const storedCalibration = z
  .looseObject({ id: z.union([z.number(), z.string()]), kind: z.string() })
  .openapi({ description: "As stored with the run when it was logged; older runs stored fewer fields, so further fields may appear." });

export const calibrationRecordAtRunSchema = z.strictObject({
  id: z.number().int(),
  kind: z.enum(calibrationKinds),
  equipmentId: z.number().int(),
  performedAt: isoTime(),
  dueAt: isoTime(),
  expired: z.boolean(),
  passed: z.boolean().nullable(),
  signedOffAt: isoTimeOrNull(),
});

export const signOffSchema = z.strictObject({ signedOffAt: isoTimeOrNull(), signedOffBy: person.nullable() });

export const runDetailSchema = z
  .strictObject({
    id: z.number().int(),
    label,
    state: runState,
    verdict: verdict.openapi({ description: "null while the check is not current." }),
    conditions: runConditionsSchema,
    purpose: z.string(),
    notes: z.string().nullable(),
    equipment: z.strictObject({ table: equipmentSchema.nullable(), tank: equipmentSchema.nullable(), camera: equipmentSchema.nullable() }),
    technician: z.strictObject({ id: z.number().int(), name: z.string(), email: z.string() }).nullable(),
    frames: z.strictObject({ count: z.number().int(), widthPx: z.number().int().nullable(), heightPx: z.number().int().nullable() }),
    viewSetup: viewSetupSchema.nullable(),
    latestTrackingJob: trackingJobSchema.nullable(),
    tracks: z.strictObject({ count: z.number().int(), items: z.array(trackSummarySchema) }),
    latestTheoryCheck: theoryCheckSummarySchema.nullable().openapi({ description: "The current theory check only: null while it is out of date or missing." }),
    checkStatus: z.enum(["current", "out_of_date", "missing"]),
    checkOutOfDate: checkOutOfDateSchema,
    calibrationsInForce: z.strictObject({
      ids: z.array(z.number().int()),
      recorded: z.strictObject({ at: isoTimeOrNull(), inForce: z.array(storedCalibration), pastDue: z.array(storedCalibration) }),
      records: z.array(calibrationRecordAtRunSchema),
    }),
    signOff: signOffSchema,
    supersedes: runLinkSchema.nullable(),
    supersededBy: z.array(runLinkSchema),
    history: z.array(runHistoryEntrySchema),
    createdAt: isoTime(),
    updatedAt: isoTime(),
  })
  .openapi("RunDetail", {
    description:
      "The run record. latestTheoryCheck is the current check only; checkStatus says current, out_of_date (an input changed since the latest check: checkOutOfDate.because names which) or missing. While the check is not current, verdict and latestTheoryCheck are null.",
  });
export type RunDetailView = z.infer<typeof runDetailSchema>;
