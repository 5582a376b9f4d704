/**
 * What the bookings page shows: the filtered list, the week view of one item (Monday 00:00 to
 * Monday 00:00 on the lab's clock), the items to choose from, the person's calendar feed and the
 * request form's defaults (tomorrow on the lab's clock, 10:00 to 12:00).
 */
import type { CurrentUser } from "./auth/permissions";
import { getCalendarFeed } from "./booking-calendar";
import { listBookings, serializeBookings } from "./bookings";
import { listEquipment } from "./equipment";
import { getLabSettings } from "./settings";
import { bookingFilterSchema } from "~/lib/validation/bookings";
import { addDays, fromZonedInput, mondayOf, zonedDay } from "~/lib/time-format";

export async function bookingsPage(user: CurrentUser, url: URL) {
  const parsed = bookingFilterSchema.safeParse(Object.fromEntries(url.searchParams));
  const filter = parsed.success ? parsed.data : { mine: false };
  const [items, settings, feed] = await Promise.all([listEquipment(), getLabSettings(), getCalendarFeed(user.id)]);
  const rows = await listBookings({
    equipmentId: "equipmentId" in filter ? filter.equipmentId : undefined,
    state: "state" in filter ? filter.state : undefined,
    from: "from" in filter && filter.from ? new Date(filter.from) : new Date(Date.now() - 7 * 86_400_000),
    to: "to" in filter && filter.to ? new Date(filter.to) : undefined,
    requesterId: filter.mine ? user.id : undefined,
  });
  const bookable = items.filter((i) => i.status === "in_service");
  const weekItemId = Number(url.searchParams.get("item")) || bookable.find((i) => i.kind === "table")?.id || bookable[0]?.id || 0;
  const weekParam = url.searchParams.get("week");
  const weekStart = mondayOf(
    weekParam && /^\d{4}-\d{2}-\d{2}$/.test(weekParam) && !Number.isNaN(Date.parse(`${weekParam}T12:00:00Z`))
      ? weekParam
      : zonedDay(new Date(), settings.timeZone),
  );
  const weekFrom = fromZonedInput(`${weekStart}T00:00`, settings.timeZone)!;
  const weekTo = fromZonedInput(`${addDays(weekStart, 7)}T00:00`, settings.timeZone)!;
  const weekRows = weekItemId
    ? (await listBookings({ equipmentId: weekItemId, from: weekFrom, to: weekTo })).filter((b) => b.state === "approved" || b.state === "requested")
    : [];
  const tomorrow = zonedDay(new Date(Date.now() + 86_400_000), settings.timeZone);
  return {
    user,
    filterProblem: parsed.success ? null : parsed.error.issues[0]!.message,
    filter: Object.fromEntries(url.searchParams),
    bookings: await serializeBookings(rows),
    items: items.map((i) => ({ id: i.id, name: i.name, kind: i.kind, status: i.status })),
    week: { itemId: weekItemId, start: weekStart, bookings: await serializeBookings(weekRows) },
    spinUpTimesToWait: settings.spinUpTimesToWait,
    feed: feed ? { prefix: feed.tokenPrefix, lastUsedAt: feed.lastUsedAt?.toISOString() ?? null } : null,
    defaults: { start: `${tomorrow}T10:00`, end: `${tomorrow}T12:00` },
  };
}

export type BookingsPage = Awaited<ReturnType<typeof bookingsPage>>;
