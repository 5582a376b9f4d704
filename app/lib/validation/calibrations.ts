import { z } from "zod";
import { calibrationKinds, MIN_RATE_READINGS } from "../calibrations";
import { calibrationFiltersSchema } from "./calibration-filters";
import { evenWithFieldErrors, FIRST_YEAR, isPlausibleDay, LAST_YEAR, strictNumber } from "./fields";

const blankToUndefined = (v: unknown) => (v === "" || v === null ? undefined : v);

const optionalText = (max: number) =>
  z.preprocess((v) => (typeof v === "string" && v.trim() === "" ? undefined : v), z.string().trim().max(max, `At most ${max} characters.`).optional());

const day = (what: string) =>
  z
    .string({ error: `Enter the ${what} (year-month-day).` })
    .regex(/^\d{4}-\d{2}-\d{2}$/, `Enter the ${what} as year-month-day, e.g. 2026-03-14.`)
    .refine(isPlausibleDay, `That ${what} is not a real day between ${FIRST_YEAR} and ${LAST_YEAR}.`);

const positive = (what: string, max: number, unit: string) =>
  strictNumber(
    z.preprocess(
      blankToUndefined,
      z.coerce
        .number({ error: `${what} must be a number.` })
        .refine(Number.isFinite, `${what} must be a number.`)
        .positive(`${what} must be more than zero.`)
        .max(max, `${what} above ${max} ${unit} is not plausible here.`)
        .optional(),
    ),
  );

const nonNegative = (what: string, max: number, unit: string) =>
  strictNumber(
    z.preprocess(
      blankToUndefined,
      z.coerce
        .number({ error: `${what} must be a number.` })
        .min(0, `${what} cannot be negative.`)
        .max(max, `${what} above ${max} ${unit} is not plausible here.`)
        .optional(),
    ),
  );

/** One rate of a reading row; the row's other rate is filled in, so a blank here is a half-filled row. */
const rowRate = (what: string) =>
  strictNumber(
    z.preprocess(
      blankToUndefined,
      z
        .number({
          error: (issue) => (issue.input === undefined ? `Enter the ${what} for this row as well, or clear the row.` : `The ${what} must be a number.`),
        })
        .refine((v) => v > 0, `A ${what} must be more than zero rpm.`),
    ),
  );

const reading = z.object({ setRpm: rowRate("set rate"), measuredRpm: rowRate("measured rate") });

/** A row the person left empty on the form (both rates blank). */
function isBlankRow(row: unknown): boolean {
  if (!row || typeof row !== "object") return false;
  const r = row as Record<string, unknown>;
  return blankToUndefined(r.setRpm) === undefined && blankToUndefined(r.measuredRpm) === undefined;
}

/**
 * Rows the person left empty on the form are dropped; a half-filled row is an error. The empty rows
 * are dropped after each row is checked, so an error lands on the row the person filled in, not on
 * the one that took its place in the shortened list.
 */
const readings = z
  .array(z.preprocess((row) => (isBlankRow(row) ? null : row), reading.nullable()))
  .transform((rows) => rows.filter((row) => row !== null))
  .optional();

/** One form for the three kinds; the refinement asks for what each kind needs. Lengths in mm on the form. */
const calibrationFields = z.object({
  kind: z.enum(calibrationKinds, { error: "Choose rate calibration, scale calibration or timing check." }),
  equipmentId: strictNumber(z.coerce.number({ error: "Choose the equipment." }).int().positive("Choose the equipment.")),
  performedOn: day("calibration date"),
  dueOn: z.preprocess(blankToUndefined, day("due date").optional()),
  notes: optionalText(4000),
  meterId: strictNumber(
    z.preprocess(blankToUndefined, z.coerce.number({ error: "Choose the rate meter." }).int().positive("Choose the rate meter.").optional()),
  ),
  readings,
  knownLengthMm: positive("Known length", 10_000, "mm"),
  knownLengthUncertaintyMm: nonNegative("Uncertainty of the known length", 1_000, "mm"),
  lengthPx: positive("Length in the image", 100_000, "px"),
  lengthUncertaintyPx: nonNegative("Uncertainty in pixels", 10_000, "px"),
  nominalFrameRateFps: positive("Nominal frame rate", 10_000, "frames/s"),
  frameIntervals: positive("Frame intervals counted", 10_000_000, "intervals"),
  frameIntervalsUncertainty: nonNegative("Uncertainty of the count", 1_000, "intervals"),
  referenceElapsedS: positive("Elapsed time by the reference", 86_400, "s"),
  referenceElapsedUncertaintyS: nonNegative("Uncertainty of the elapsed time", 3_600, "s"),
});

function kindNeeds(v: z.infer<typeof calibrationFields>, ctx: z.RefinementCtx) {
  const need = (field: keyof typeof v, message: string) => {
    if (v[field] === undefined) ctx.addIssue({ code: "custom", path: [field], message });
  };
  if (typeof v.dueOn === "string" && typeof v.performedOn === "string" && v.dueOn < v.performedOn) {
    ctx.addIssue({ code: "custom", path: ["dueOn"], message: "The due date cannot be before the calibration date." });
  }
  if (v.kind === "rate") {
    need("meterId", "Choose the rate meter the readings were taken with.");
    // A failed row leaves the list unparsed, empty rows and all.
    const readings = (Array.isArray(v.readings) ? v.readings : []).filter((row) => row !== null && !isBlankRow(row));
    const n = readings.length;
    if (n < MIN_RATE_READINGS) {
      ctx.addIssue({ code: "custom", path: ["readings"], message: `Enter readings at ${MIN_RATE_READINGS} or more set rates (${n} entered).` });
    } else if (new Set(readings.map((r) => r.setRpm)).size < 2) {
      ctx.addIssue({ code: "custom", path: ["readings"], message: "Use at least two different set rates, or no line can be fitted." });
    }
  }
  if (v.kind === "scale") {
    need("knownLengthMm", "Enter the known length.");
    need("knownLengthUncertaintyMm", "Enter the uncertainty of the known length (0 if exact).");
    need("lengthPx", "Enter the length measured in the image.");
    need("lengthUncertaintyPx", "Enter the uncertainty in pixels (e.g. 1 px).");
  }
  if (v.kind === "timing") {
    need("nominalFrameRateFps", "Enter the camera's nominal frame rate.");
    need("frameIntervals", "Enter how many frame intervals you counted.");
    need("frameIntervalsUncertainty", "Enter the uncertainty of the count (e.g. 1).");
    need("referenceElapsedS", "Enter the elapsed time by the reference clock or meter.");
    need("referenceElapsedUncertaintyS", "Enter the uncertainty of the elapsed time.");
  }
}

export const calibrationSchema = calibrationFields.superRefine(kindNeeds, evenWithFieldErrors);
/** The API's body: the same fields, refusing ones it does not know so a misspelt field is an error, not dropped. */
export const calibrationApiSchema = calibrationFields.strict().superRefine(kindNeeds, evenWithFieldErrors);

export type CalibrationInput = z.infer<typeof calibrationSchema>;

/**
 * GET /api/v1/calibrations's query: the calibrations page's filters (kind, standing, search text q),
 * with the item named by `equipmentId` as the API always has. A value that cannot be meant is an
 * error, not a silently unfiltered list; a blank one is "any".
 */
export const calibrationFilterSchema = z.object({
  equipmentId: z.preprocess(
    blankToUndefined,
    z
      .string()
      .regex(/^[1-9]\d{0,14}$/, "equipmentId must be the id number of one piece of equipment.")
      .transform(Number)
      .optional(),
  ),
  kind: z.preprocess(blankToUndefined, calibrationFiltersSchema.shape.kind),
  standing: z.preprocess(blankToUndefined, calibrationFiltersSchema.shape.standing),
  q: z.preprocess(blankToUndefined, calibrationFiltersSchema.shape.q),
});
