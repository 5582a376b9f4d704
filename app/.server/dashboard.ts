import { Op } from "sequelize";
import { Booking } from "./db";
import { listBookings, serializeBookings } from "./bookings";
import { listCalibrationsDueOrExpired } from "./calibrations";
import { listRuns } from "./runs/queries";
import type { CurrentUser } from "./auth/permissions";
import type { RunState } from "~/lib/runs";
import type { RunFilters } from "~/lib/validation/run-filters";

/** How far ahead the dashboard looks: bookings for today and the next days, calibrations falling due. */
export const BOOKING_DAYS_AHEAD = 3;
export const CALIBRATION_DAYS_AHEAD = 14;

function startOfToday(now: Date) {
  return new Date(now.getFullYear(), now.getMonth(), now.getDate());
}

async function queue(state: RunState, technicianId?: number) {
  const filters: RunFilters = { state, technician: technicianId, sort: "createdAt", dir: "asc", page: 1, pageSize: 10 };
  const page = await listRuns(filters);
  return { state, total: page.total, items: page.items.slice(0, 5), technicianId: technicianId ?? null };
}

/** What one person's home page shows: their role decides which queues matter. */
export async function getDashboard(user: CurrentUser, now = new Date()) {
  const from = startOfToday(now);
  const to = new Date(from.getFullYear(), from.getMonth(), from.getDate() + BOOKING_DAYS_AHEAD + 1);
  const mine = user.role === "technician" ? user.id : undefined;
  const isManager = user.role === "lab_manager";
  const logsRuns = user.role !== "instructor";

  const [bookings, requestedCount, calibrations, tracking, checking, signOff, disagreeing] = await Promise.all([
    listBookings({ state: "approved", from, to, limit: 50 }).then(serializeBookings),
    isManager ? Booking.count({ where: { state: "requested", endAt: { [Op.gt]: now } } }) : Promise.resolve(null),
    logsRuns ? listCalibrationsDueOrExpired(CALIBRATION_DAYS_AHEAD, now) : Promise.resolve([]),
    logsRuns ? queue("frames_in", mine) : Promise.resolve(null),
    logsRuns ? queue("tracked", mine) : Promise.resolve(null),
    isManager ? queue("checked") : Promise.resolve(null),
    listRuns({ verdict: "disagrees", sort: "createdAt", dir: "desc", page: 1, pageSize: 10 }).then((p) => ({ total: p.total, items: p.items.slice(0, 5) })),
  ]);
  return {
    bookings: bookings.map((b) => ({ ...b, mine: b.requesterId === user.id })),
    bookingDaysAhead: BOOKING_DAYS_AHEAD,
    requestedCount,
    calibrations,
    calibrationDaysAhead: CALIBRATION_DAYS_AHEAD,
    queues: { tracking, checking, signOff },
    disagreeing,
    today: from.toISOString(),
  };
}
export type Dashboard = Awaited<ReturnType<typeof getDashboard>>;
