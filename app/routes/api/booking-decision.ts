import type { Route } from "./+types/booking-decision";
import { requireRole, requireUser } from "~/.server/auth/permissions";
import { parseId, readJson } from "~/.server/http";
import { approveBooking, cancelBooking, declineBooking, serializeBookingChange } from "~/.server/bookings";
import { invalidInput, methodNotAllowed, refusalResponse } from "~/.server/api-responses";
import { declineSchema } from "~/lib/validation/bookings";

/** POST /api/v1/bookings/:id/approve | /decline {"reason"} | /cancel — one module, three routes. */
export async function action({ request, params }: Route.ActionArgs) {
  const what = new URL(request.url).pathname.split("/").pop();
  if (what === "cancel") {
    const user = await requireUser(request);
    if (request.method !== "POST") return methodNotAllowed("POST");
    const id = parseId(request, params.id, "That booking");
    try {
      const { booking, mail } = await cancelBooking(id, user);
      return Response.json(await serializeBookingChange(booking, mail));
    } catch (err) {
      return refusalResponse(err);
    }
  }
  const manager = await requireRole(request, "lab_manager");
  if (request.method !== "POST") return methodNotAllowed("POST");
  const id = parseId(request, params.id, "That booking");
  try {
    if (what === "approve") {
      const { booking, mail } = await approveBooking(id, manager);
      return Response.json(await serializeBookingChange(booking, mail));
    }
    const parsed = declineSchema.safeParse(await readJson(request));
    if (!parsed.success) return invalidInput(parsed.error);
    const { booking, mail } = await declineBooking(id, manager, parsed.data.reason);
    return Response.json(await serializeBookingChange(booking, mail));
  } catch (err) {
    return refusalResponse(err);
  }
}

export function loader() {
  return methodNotAllowed("POST");
}
