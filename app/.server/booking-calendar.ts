import { createEvent, createEvents, type EventAttributes } from "ics";
import { CalendarFeed, User } from "./db";
import { env } from "./env";
import { getLabId } from "./settings";
import { hashToken, newSecretToken } from "./auth/tokens";
import { listBookings, serializeBookings } from "./bookings";
import { bookingStateLabels, tableBookingCaution, type BookingState } from "~/lib/bookings";
import { formatDuration } from "~/lib/time-format";
import { foldIcsLines } from "~/lib/icalendar";
import type { BookingView } from "./openapi/responses/bookings";

/**
 * Bookings as iCalendar (RFC 5545): one booking's event, and a person's secret feed of their
 * approved bookings that a calendar app subscribes to.
 */
const icsStatus: Record<BookingState, EventAttributes["status"]> = {
  requested: "TENTATIVE",
  approved: "CONFIRMED",
  declined: "CANCELLED",
  cancelled: "CANCELLED",
};

/**
 * The UID of a booking's event: the booking id and the lab's own identifier (a random UUID stored once),
 * so a booking keeps its UID when APP_URL or the host name changes and two labs never share one.
 */
export function bookingUid(bookingId: number, labId: string) {
  return `booking-${bookingId}@${labId}`;
}

function icsEvent(b: BookingView, labId: string): EventAttributes {
  return {
    uid: bookingUid(b.id, labId),
    // UTC in, UTC out: DTSTART/DTEND end in Z, so every calendar app places them the same.
    start: new Date(b.start).getTime(),
    startInputType: "utc",
    startOutputType: "utc",
    end: new Date(b.end).getTime(),
    endInputType: "utc",
    endOutputType: "utc",
    title: `${b.equipmentName}: ${b.purpose}`,
    description: [
      `Booking #${b.id} (${bookingStateLabels[b.state].toLowerCase()}) by ${b.requesterName}.`,
      `Purpose: ${b.purpose}`,
      ...(b.spinUpLeadMinutes ? [`Includes ${formatDuration(b.spinUpLeadMinutes * 60)} of spin-up lead time.`] : []),
      ...(b.equipmentKind === "table" ? [tableBookingCaution] : []),
    ].join("\n"),
    url: `${env.appUrl}/bookings/${b.id}`,
    status: icsStatus[b.state],
    // A decision or a cancellation is a new version of the same event.
    sequence: b.state === "requested" ? 0 : b.cancelledAt ? 2 : 1,
    productId: "tankside/bookings",
    lastModified: new Date(b.cancelledAt ?? b.decidedAt ?? b.createdAt).getTime(),
  };
}

export async function bookingIcs(b: BookingView): Promise<string> {
  const { error, value } = createEvent({ ...icsEvent(b, await getLabId()), method: "PUBLISH" });
  if (error || !value) throw error ?? new Error("could not build the iCalendar file");
  return foldIcsLines(value);
}

/** One person's approved bookings from a month back onwards, as a subscribable calendar. */
export async function personalFeedIcs(userId: number): Promise<string> {
  const rows = await listBookings({ requesterId: userId, state: "approved", from: new Date(Date.now() - 31 * 86_400_000) });
  const [views, labId] = await Promise.all([serializeBookings(rows), getLabId()]);
  const { error, value } = createEvents(
    views.map((v) => icsEvent(v, labId)),
    { productId: "tankside/bookings", method: "PUBLISH", calName: "Tankside bookings" },
  );
  if (error || !value) throw error ?? new Error("could not build the iCalendar feed");
  return foldIcsLines(value);
}

const FEED_PREFIX = "tkc_";

/**
 * Makes (or replaces) a person's secret feed address; the token is shown once, only its hash is kept.
 * One feed per person (unique user_id): one INSERT … ON CONFLICT (user_id) DO UPDATE, so two at once
 * leave one row, the later address, on either database.
 */
export async function createCalendarFeed(userId: number): Promise<string> {
  const token = FEED_PREFIX + newSecretToken(24);
  await CalendarFeed.upsert({ userId, tokenHash: hashToken(token), tokenPrefix: token.slice(0, 10), lastUsedAt: null, createdAt: new Date() });
  return token;
}

export async function revokeCalendarFeed(userId: number) {
  await CalendarFeed.destroy({ where: { userId } });
}

export function getCalendarFeed(userId: number) {
  return CalendarFeed.findOne({ where: { userId } });
}

export function feedUrl(token: string) {
  return `${env.appUrl}/api/v1/feeds/${token}/bookings.ics`;
}

/** The active owner of a feed token, or null. */
export async function feedOwner(token: string) {
  if (!token.startsWith(FEED_PREFIX) || token.length > 100) return null;
  const feed = await CalendarFeed.findOne({ where: { tokenHash: hashToken(token) } });
  if (!feed) return null;
  const user = await User.findByPk(feed.userId);
  if (!user || !user.active) return null;
  if (!feed.lastUsedAt || Date.now() - feed.lastUsedAt.getTime() > 3_600_000) await feed.update({ lastUsedAt: new Date() });
  return user;
}
