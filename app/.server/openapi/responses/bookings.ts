import { z } from "../zod";
import { isoTime, isoTimeOrNull, mailReportSchema } from "./common";
import { bookingStates } from "~/lib/bookings";
import { equipmentKinds } from "~/lib/equipment";

const bookingFields = {
  id: z.number().int(),
  equipmentId: z.number().int(),
  equipmentName: z.string(),
  equipmentKind: z.enum(equipmentKinds).nullable(),
  state: z.enum(bookingStates),
  start: isoTime(),
  end: isoTime(),
  purpose: z.string(),
  plannedRateRpm: z.number().nullable(),
  plannedDepthCm: z.number().nullable(),
  spinUpLeadMinutes: z.number().nullable().openapi({ description: "Minutes added before the slot for the water to spin up, to 0.1 min." }),
  requesterId: z.number().int(),
  requesterName: z.string(),
  decidedById: z.number().int().nullable(),
  decidedByName: z.string().nullable(),
  decidedAt: isoTimeOrNull(),
  declineReason: z.string().nullable(),
  cancelledById: z.number().int().nullable(),
  cancelledAt: isoTimeOrNull(),
  createdAt: isoTime(),
};

export const bookingSchema = z.strictObject(bookingFields).openapi("Booking");
export type BookingView = z.infer<typeof bookingSchema>;

/** A booking as a change answers it: the booking, and the e-mail the change queued. */
export const bookingChangeSchema = z.strictObject({ ...bookingFields, mail: mailReportSchema }).openapi("BookingChange");
export type BookingChangeView = z.infer<typeof bookingChangeSchema>;

export const bookingListSchema = z.array(bookingSchema);
