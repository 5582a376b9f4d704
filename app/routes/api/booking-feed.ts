import type { Route } from "./+types/booking-feed";
import { apiError } from "~/.server/http";
import { feedOwner, personalFeedIcs } from "~/.server/booking-calendar";

/**
 * GET /api/v1/feeds/:token/bookings.ics — a person's approved bookings for a calendar app, which
 * cannot sign in: the secret in the address is the credential (only its hash is stored).
 */
export async function loader({ params }: Route.LoaderArgs) {
  const owner = await feedOwner(params.token);
  if (!owner) return apiError(404, "not_found", "No calendar feed at this address (it may have been replaced).");
  return new Response(await personalFeedIcs(owner.id), {
    headers: { "Content-Type": "text/calendar; charset=utf-8", "Cache-Control": "private, max-age=300" },
  });
}
