import { z } from "../zod";
import { isoTime } from "./common";
import { equipmentKinds, equipmentStatuses } from "~/lib/equipment";

/** One item of the equipment register; fields that do not apply to the item's kind are null. */
export const equipmentSchema = z
  .strictObject({
    id: z.number().int(),
    name: z.string(),
    kind: z.enum(equipmentKinds),
    status: z.enum(equipmentStatuses),
    maker: z.string().nullable(),
    model: z.string().nullable(),
    serialNumber: z.string().nullable(),
    location: z.string().nullable(),
    notes: z.string().nullable(),
    diameterM: z.number().nullable(),
    maxRateRpm: z.number().nullable(),
    flatTable: z.boolean().nullable(),
    rateTolerancePct: z.number().nullable(),
    depthM: z.number().nullable(),
    resolutionWidthPx: z.number().int().nullable(),
    resolutionHeightPx: z.number().int().nullable(),
    nominalFrameRateFps: z.number().nullable(),
    scaleTolerancePct: z.number().nullable(),
    meterType: z.string().nullable(),
    createdAt: isoTime(),
    updatedAt: isoTime(),
  })
  .openapi("Equipment");
export type EquipmentView = z.infer<typeof equipmentSchema>;

export const equipmentListSchema = z.array(equipmentSchema);
