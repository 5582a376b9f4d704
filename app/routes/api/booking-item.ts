import type { Route } from "./+types/booking-item";
import { requireUser } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { getBooking, serializeBooking } from "~/.server/bookings";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const booking = await getBooking(parseId(request, params.id, "That booking"));
  if (!booking) return apiError(404, "not_found", "No booking with that id.");
  return Response.json(await serializeBooking(booking));
}
