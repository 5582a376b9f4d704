import { z } from "zod";
import { dateInput, FIRST_YEAR, LAST_YEAR, strictNumber } from "./fields";

const num = (what: string) => strictNumber(z.preprocess((v) => (v === "" || v === null ? undefined : v), z.coerce.number({ error: `Enter the ${what}.` })));

/**
 * The run log form. Lengths are entered in cm and stored in metres; limits that depend on the
 * chosen equipment (table maximum, tank depth) are checked against the register on the server.
 */
export const runSchema = z.object({
  tableId: strictNumber(z.coerce.number({ error: "Choose the table." }).int().positive("Choose the table.")),
  tankId: strictNumber(z.coerce.number({ error: "Choose the tank." }).int().positive("Choose the tank.")),
  cameraId: strictNumber(z.coerce.number({ error: "Choose the camera." }).int().positive("Choose the camera.")),
  setRateRpm: num("set rate")
    .refine((v) => Number.isFinite(v), "Enter the set rate as a number.")
    .refine((v) => v > 0, "The set rate must be above 0 rpm; choose the direction below for clockwise runs.")
    .refine((v) => v <= 120, "Above 120 rpm is beyond any teaching table; check the number."),
  direction: z.enum(["ccw", "cw"], { error: "Choose counterclockwise or clockwise (seen from above)." }),
  waterDepthCm: num("water depth")
    .refine((v) => v > 0, "The water depth must be more than 0 cm.")
    .refine((v) => v <= 200, "Over 2 m of water is not plausible here; check the number."),
  waterTemperatureC: num("water temperature")
    .refine((v) => v >= 0, "Water below 0 °C would be ice: check the thermometer reading.")
    .refine((v) => v <= 40, "Above 40 °C is outside what Tankside's water properties cover (0–40 °C)."),
  rateReachedAt: z.preprocess(
    (v) => (v === "" || v === null ? undefined : dateInput(v)),
    z.coerce.date({ error: `Give the time the table reached its rate as a date and time between ${FIRST_YEAR} and ${LAST_YEAR}.` }).optional(),
  ),
  cameraMode: z.enum(["rotating", "lab"], { error: "Say whether the camera rides on the table or stands in the room." }),
  frameRateFps: num("frame rate")
    .refine((v) => v > 0, "The frame rate must be more than 0 frames per second.")
    .refine((v) => v <= 1000, "Above 1000 frames/s is beyond the cameras Tankside handles."),
  tracer: z.enum(["float", "dye"], { error: "Choose float or dye." }),
  purpose: z
    .string({ error: "Say what the run is for." })
    .trim()
    .min(3, "Say what the run is for (a few words).")
    .max(300, "Keep the purpose under 300 characters."),
  notes: z.preprocess((v) => (v === "" ? undefined : v), z.string().max(5000, "Keep notes under 5000 characters.").optional()),
  supersedesId: strictNumber(z.preprocess((v) => (v === "" || v === null ? undefined : v), z.coerce.number().int().positive().optional())),
  /** A correction only: start without the corrected run's frames (new ones will be uploaded). The form's checkbox sends "on". */
  leaveFramesOut: z
    .preprocess((v) => (v === "on" ? true : v === "" || v === null ? undefined : v), z.boolean({ error: "Say true or false." }).optional())
    .meta({
      description:
        "A correction only (with supersedesId): true starts it without the corrected run's frames, to upload new ones. Left out or false, it shares them (no upload).",
    }),
});

export type RunInput = z.infer<typeof runSchema>;

/** The fields a change to a run can touch, with the words the history shows. */
export const runFieldLabels: Record<string, string> = {
  tableId: "table",
  tankId: "tank",
  cameraId: "camera",
  setRateRpm: "set rate (rpm)",
  direction: "direction",
  waterDepthM: "water depth (m)",
  waterTemperatureC: "water temperature (°C)",
  rateReachedAt: "rate reached at",
  cameraMode: "camera mode",
  frameRateFps: "frame rate (frames/s)",
  tracer: "tracer",
  purpose: "purpose",
  notes: "notes",
  state: "state",
  leaveFramesOut: "frames left out",
};
