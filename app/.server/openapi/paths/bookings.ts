import type { OpenAPIRegistry } from "@asteasolutions/zod-to-openapi";
import { z } from "../zod";
import { badBody, error, file, ids, json, notJson, operation, routeSchema } from "./helpers";
import { bookingChangeSchema, bookingListSchema, bookingSchema } from "../responses/bookings";
import { bookingApiSchema, bookingFilterSchema, declineSchema } from "~/lib/validation/bookings";

const tags = ["Bookings"];
const noBooking = error("No such booking (not_found).");
const notState = "booking_conflict: it would overlap an approved booking of the item; invalid_state: the booking is not in a state that allows this";
const refusedNow = error("equipment_unavailable (out of service), slot_in_past or invalid_slot: well-formed, but the lab cannot do it now.");

export function registerBookingPaths(registry: OpenAPIRegistry) {
  const request = registry.register("BookingRequest", routeSchema(bookingApiSchema));
  const decline = registry.register("BookingDecline", routeSchema(declineSchema));
  operation(registry, {
    method: "get",
    path: "/api/v1/bookings",
    operationId: "listBookings",
    tags,
    summary: "The lab's bookings, soonest first (every signed-in person)",
    request: { query: routeSchema(bookingFilterSchema) },
    responses: { 200: json(bookingListSchema, "Soonest first"), 400: error("A filter is not valid (invalid_input, with issues).") },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/bookings",
    operationId: "requestBooking",
    tags,
    summary: "Request equipment time; the lab managers are e-mailed",
    request: { body: { required: true, content: { "application/json": { schema: request } } } },
    responses: {
      201: json(bookingChangeSchema, "Requested"),
      400: badBody(),
      404: error("Unknown equipment (not_found)."),
      409: error("booking_conflict with an approved booking."),
      415: notJson,
      422: refusedNow,
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/bookings/{id}",
    operationId: "getBooking",
    tags,
    summary: "One booking",
    request: { params: ids("id") },
    responses: { 200: json(bookingSchema, "The booking"), 404: noBooking },
  });
  const decision = (what: "approve" | "decline" | "cancel", summary: string) =>
    operation(registry, {
      method: "post",
      path: `/api/v1/bookings/{id}/${what}`,
      operationId: `${what}Booking`,
      tags,
      summary,
      request: { params: ids("id"), ...(what === "decline" ? { body: { required: true, content: { "application/json": { schema: decline } } } } : {}) },
      responses: {
        200: json(bookingChangeSchema, "The booking after the change"),
        ...(what === "decline" ? { 400: badBody(), 415: notJson } : {}),
        403: error(what === "cancel" ? "Only the requester or a lab manager can cancel (forbidden)." : "Only a lab manager decides (forbidden)."),
        404: noBooking,
        409: error(`${notState}.`),
        422: refusedNow,
      },
    });
  decision("approve", "Approve (lab manager); the requester is e-mailed");
  decision("decline", "Decline with a reason (lab manager); the requester is e-mailed");
  decision("cancel", "Cancel (the requester or a lab manager)");
  operation(registry, {
    method: "get",
    path: "/api/v1/bookings/{id}/ics",
    operationId: "getBookingIcs",
    tags,
    summary: "One booking as iCalendar (RFC 5545), times in UTC",
    request: { params: ids("id") },
    responses: { 200: file("text/calendar", "A VCALENDAR with one VEVENT"), 404: noBooking },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/feeds/{token}/bookings.ics",
    operationId: "getBookingFeed",
    tags,
    summary: "A person's approved bookings as a calendar feed; the secret token in the address is the credential",
    public: true,
    request: { params: z.strictObject({ token: z.string() }) },
    responses: { 200: file("text/calendar", "A VCALENDAR"), 404: error("Unknown or replaced feed address (not_found).") },
  });
}
