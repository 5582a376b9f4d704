import type { Route } from "./+types/booking-ics";
import { requireUser } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { getBooking, serializeBooking } from "~/.server/bookings";
import { bookingIcs } from "~/.server/booking-calendar";

/** GET /api/v1/bookings/:id/ics — one booking as an iCalendar (RFC 5545) file, for a signed-in person. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const booking = await getBooking(parseId(request, params.id, "That booking"));
  if (!booking) return apiError(404, "not_found", "No booking with that id.");
  return new Response(await bookingIcs(await serializeBooking(booking)), {
    headers: {
      "Content-Type": "text/calendar; charset=utf-8",
      "Content-Disposition": `attachment; filename="tankside-booking-${booking.id}.ics"`,
      "Cache-Control": "private, no-store",
    },
  });
}
