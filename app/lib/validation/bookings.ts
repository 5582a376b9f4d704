import { z } from "zod";
import { bookingStates } from "../bookings";
import { evenWithFieldErrors, FIRST_YEAR, isPlausibleDateTime, LAST_YEAR, strictNumber } from "./fields";

const blankToUndefined = (v: unknown) => (v === "" || v === null ? undefined : v);

const localDateTime = (what: string) =>
  z
    .string({ error: `Enter the ${what}.` })
    .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2})?$/, `Enter the ${what} as a date and time.`)
    .refine(isPlausibleDateTime, `That ${what} is not a real time between ${FIRST_YEAR} and ${LAST_YEAR}.`);

const purpose = z
  .string({ error: "Say what the booking is for." })
  .trim()
  .min(3, "Say what the booking is for (a few words).")
  .max(300, "Keep the purpose under 300 characters.");

const plannedRateRpm = strictNumber(
  z.preprocess(
    blankToUndefined,
    z.coerce
      .number({ error: "The planned rate must be a number." })
      .positive("The planned rate must be more than zero.")
      .max(200, "A planned rate above 200 rpm is not plausible.")
      .optional(),
  ),
);
const plannedDepthCm = strictNumber(
  z.preprocess(
    blankToUndefined,
    z.coerce
      .number({ error: "The planned depth must be a number." })
      .positive("The planned depth must be more than zero.")
      .max(200, "A planned depth above 200 cm is not plausible.")
      .optional(),
  ),
);

/** The request form: times are the lab's local time (datetime-local fields). */
export const bookingRequestSchema = z
  .object({
    equipmentId: z.coerce.number({ error: "Choose the equipment." }).int().positive("Choose the equipment."),
    start: localDateTime("start"),
    end: localDateTime("end"),
    purpose,
    plannedRateRpm,
    plannedDepthCm,
    addSpinUpLead: z.preprocess((v) => v === "on" || v === "true" || v === true, z.boolean()).default(false),
  })
  .superRefine((v, ctx) => {
    if (new Date(v.end).getTime() <= new Date(v.start).getTime()) {
      ctx.addIssue({ code: "custom", path: ["end"], message: "The end must be after the start." });
    }
    if (v.addSpinUpLead && (v.plannedRateRpm === undefined || v.plannedDepthCm === undefined)) {
      ctx.addIssue({ code: "custom", path: ["addSpinUpLead"], message: "Give the planned rate and depth to add the spin-up lead time." });
    }
  }, evenWithFieldErrors);

/** The API body: ISO 8601 times with a zone (Z or an offset), so no one guesses the time zone. */
export const bookingApiSchema = z.strictObject({
  equipmentId: z.number({ error: "equipmentId must be a number." }).int("equipmentId must be a whole number.").positive("equipmentId must be positive."),
  start: z.iso
    .datetime({ offset: true, error: "start must be an ISO 8601 time with a zone, e.g. 2026-03-14T09:00:00Z." })
    .refine(isPlausibleDateTime, `start must be a real time between ${FIRST_YEAR} and ${LAST_YEAR}.`),
  end: z.iso
    .datetime({ offset: true, error: "end must be an ISO 8601 time with a zone, e.g. 2026-03-14T11:00:00Z." })
    .refine(isPlausibleDateTime, `end must be a real time between ${FIRST_YEAR} and ${LAST_YEAR}.`),
  purpose,
  plannedRateRpm: z.number().positive("plannedRateRpm must be more than zero.").max(200).optional(),
  plannedDepthCm: z.number().positive("plannedDepthCm must be more than zero.").max(200).optional(),
  addSpinUpLead: z.boolean().optional(),
});

export const declineSchema = z.strictObject({
  reason: z
    .string({ error: "Give a reason for declining." })
    .trim()
    .min(3, "Give a reason for declining (a few words).")
    .max(500, "Keep the reason under 500 characters."),
});

export const bookingFilterSchema = z.object({
  equipmentId: z.preprocess(blankToUndefined, z.coerce.number().int().positive("equipmentId must be a positive whole number.").optional()),
  state: z.preprocess(blankToUndefined, z.enum(bookingStates, { error: `state must be one of ${bookingStates.join(", ")}.` }).optional()),
  from: z.preprocess(
    blankToUndefined,
    z
      .string()
      .refine((s) => !Number.isNaN(new Date(s).getTime()), "from must be a date or time (ISO 8601).")
      .optional(),
  ),
  to: z.preprocess(
    blankToUndefined,
    z
      .string()
      .refine((s) => !Number.isNaN(new Date(s).getTime()), "to must be a date or time (ISO 8601).")
      .optional(),
  ),
  mine: z.preprocess((v) => v === "1" || v === "true" || v === "on", z.boolean()).default(false),
});
