import { z } from "zod";
import { equipmentKinds, equipmentStatuses, meterTypes } from "../equipment";
import { evenWithFieldErrors, strictNumber } from "./fields";

const optionalText = (max: number) =>
  z.preprocess((v) => (typeof v === "string" && v.trim() === "" ? undefined : v), z.string().trim().max(max, `At most ${max} characters.`).optional());

const optionalPositive = (what: string, max: number, unit: string) =>
  strictNumber(
    z.preprocess(
      (v) => (v === "" || v === null ? undefined : v),
      z.coerce
        .number({ error: `${what} must be a number.` })
        .positive(`${what} must be more than zero.`)
        .max(max, `${what} above ${max} ${unit} is not plausible for a teaching lab.`)
        .optional(),
    ),
  );

/** One form for every kind; the refinement below asks for what each kind needs. Lengths in cm on the form. */
export const equipmentSchema = z
  .object({
    kind: z.enum(equipmentKinds, { error: "Choose what kind of equipment this is." }),
    name: z
      .string({ error: "Give it a name people recognise on the bench." })
      .trim()
      .min(1, "Give it a name people recognise on the bench.")
      .max(120, "At most 120 characters."),
    status: z.enum(equipmentStatuses, { error: "Choose a status." }).default("in_service"),
    maker: optionalText(120),
    model: optionalText(120),
    serialNumber: optionalText(120),
    location: optionalText(120),
    notes: optionalText(4000),
    diameterCm: optionalPositive("Diameter", 500, "cm"),
    maxRateRpm: optionalPositive("Maximum rate", 200, "rpm"),
    flatTable: z.preprocess((v) => v === "on" || v === "true" || v === true, z.boolean()).default(false),
    rateTolerancePct: optionalPositive("Rate tolerance", 50, "%"),
    depthCm: optionalPositive("Depth", 200, "cm"),
    resolutionWidthPx: optionalPositive("Image width", 20000, "px"),
    resolutionHeightPx: optionalPositive("Image height", 20000, "px"),
    nominalFrameRateFps: optionalPositive("Frame rate", 1000, "frames/s"),
    scaleTolerancePct: optionalPositive("Scale tolerance", 50, "%"),
    meterType: z.preprocess((v) => (v === "" ? undefined : v), z.enum(meterTypes).optional()),
  })
  .superRefine((v, ctx) => {
    const need = (field: keyof typeof v, message: string) => {
      if (v[field] === undefined) ctx.addIssue({ code: "custom", path: [field], message });
    };
    if (v.kind === "table") {
      need("diameterCm", "A table needs its diameter.");
      need("maxRateRpm", "A table needs its maximum rate from the maker's documentation.");
    }
    if (v.kind === "tank") {
      need("diameterCm", "A tank needs its inner diameter.");
      need("depthCm", "A tank needs its inner depth.");
    }
    if (v.kind === "camera") {
      need("resolutionWidthPx", "A camera needs its image width.");
      need("resolutionHeightPx", "A camera needs its image height.");
      need("nominalFrameRateFps", "A camera needs its nominal frame rate.");
    }
  }, evenWithFieldErrors);

export type EquipmentInput = z.infer<typeof equipmentSchema>;

const blank = (v: unknown) => (v === "" ? undefined : v);

/** GET /api/v1/equipment's query: a filter that cannot be applied is an error, not a silently unfiltered list. */
export const equipmentFilterSchema = z.object({
  kind: z.preprocess(blank, z.enum(equipmentKinds, { error: `kind must be one of ${equipmentKinds.join(", ")}.` }).optional()),
  status: z.preprocess(blank, z.enum(["in_service"], { error: "status can only be in_service (items that can be used or booked)." }).optional()),
});
