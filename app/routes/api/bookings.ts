import type { Route } from "./+types/bookings";
import { requireUser } from "~/.server/auth/permissions";
import { readJson } from "~/.server/http";
import { createBooking, listBookings, serializeBookingChange, serializeBookings } from "~/.server/bookings";
import { invalidInput, methodNotAllowed, refusalResponse } from "~/.server/api-responses";
import { bookingApiSchema, bookingFilterSchema } from "~/lib/validation/bookings";

/** GET /api/v1/bookings?equipmentId=&state=&from=&to=&mine=1 — every signed-in person sees the lab's schedule. */
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const parsed = bookingFilterSchema.safeParse(Object.fromEntries(new URL(request.url).searchParams));
  if (!parsed.success) return invalidInput(parsed.error);
  const f = parsed.data;
  const rows = await listBookings({
    equipmentId: f.equipmentId,
    state: f.state,
    from: f.from ? new Date(f.from) : undefined,
    to: f.to ? new Date(f.to) : undefined,
    requesterId: f.mine ? user.id : undefined,
  });
  return Response.json(await serializeBookings(rows));
}

/** POST /api/v1/bookings {"equipmentId","start","end","purpose"} → 201 with the requested booking. */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  if (request.method !== "POST") return methodNotAllowed("GET, POST");
  const parsed = bookingApiSchema.safeParse(await readJson(request));
  if (!parsed.success) return invalidInput(parsed.error);
  const v = parsed.data;
  try {
    const { booking, mail } = await createBooking(
      {
        equipmentId: v.equipmentId,
        start: new Date(v.start),
        end: new Date(v.end),
        purpose: v.purpose,
        plannedRateRpm: v.plannedRateRpm,
        plannedDepthM: v.plannedDepthCm === undefined ? undefined : v.plannedDepthCm / 100,
        addSpinUpLead: v.addSpinUpLead,
      },
      user,
    );
    return Response.json(await serializeBookingChange(booking, mail), { status: 201, headers: { Location: `/api/v1/bookings/${booking.id}` } });
  } catch (err) {
    return refusalResponse(err);
  }
}
