import { Op } from "sequelize";
import { Booking } from "./db";
import { listBookings, serializeBookings } from "./bookings";
import { listCalibrationsDueOrExpired } from "./calibrations-in-force";
import { listRunsWithTotal } from "./runs/queries";
import { listCalibrationsAwaitingSignOff } from "./calibration-queries";
import type { CurrentUser } from "./auth/permissions";
import { getLabTimeZone } from "./settings";
import { fromZonedInput, zonedDay } from "~/lib/time-format";
import type { RunState } from "~/lib/runs";

/** How far ahead the dashboard looks: bookings for today and the next days, calibrations falling due. */
export const BOOKING_DAYS_AHEAD = 3;
export const CALIBRATION_DAYS_AHEAD = 14;
/** How many items a dashboard list shows; its count says how many there are in all. */
export const DASHBOARD_LIST_SIZE = 5;

/** Today's 00:00 and the 00:00 that many days on, on the lab's clock. */
function labDays(now: Date, days: number, zone: string) {
  const today = zonedDay(now, zone);
  const [y, m, d] = today.split("-").map(Number) as [number, number, number];
  const later = new Date(Date.UTC(y, m - 1, d + days)).toISOString().slice(0, 10);
  return { from: fromZonedInput(`${today}T00:00`, zone)!, to: fromZonedInput(`${later}T00:00`, zone)! };
}

async function queue(state: RunState, technicianId?: number) {
  const { items, total } = await listRunsWithTotal({ state, technician: technicianId, sort: "createdAt", dir: "asc" }, DASHBOARD_LIST_SIZE);
  return { state, total, items, technicianId: technicianId ?? null };
}

/** What one person's home page shows: their role decides which queues matter. */
export async function getDashboard(user: CurrentUser, now = new Date()) {
  const { from, to } = labDays(now, BOOKING_DAYS_AHEAD + 1, await getLabTimeZone());
  const mine = user.role === "technician" ? user.id : undefined;
  const isManager = user.role === "lab_manager";
  const logsRuns = user.role !== "instructor";

  // Lab managers sign calibrations off, so they see every record waiting; a technician sees their own.
  const calibrationsToSign = isManager ? {} : user.role === "technician" ? { performedById: user.id } : null;

  const [bookings, requestedCount, calibrations, tracking, checking, signOff, disagreeing, calibrationSignOff] = await Promise.all([
    listBookings({ state: "approved", from, to, limit: 50 }).then(serializeBookings),
    isManager ? Booking.count({ where: { state: "requested", endAt: { [Op.gt]: now } } }) : Promise.resolve(null),
    logsRuns ? listCalibrationsDueOrExpired(CALIBRATION_DAYS_AHEAD, now) : Promise.resolve([]),
    logsRuns ? queue("frames_in", mine) : Promise.resolve(null),
    logsRuns ? queue("tracked", mine) : Promise.resolve(null),
    isManager ? queue("checked") : Promise.resolve(null),
    listRunsWithTotal({ verdict: "disagrees", sort: "createdAt", dir: "desc" }, DASHBOARD_LIST_SIZE),
    calibrationsToSign ? listCalibrationsAwaitingSignOff(DASHBOARD_LIST_SIZE, calibrationsToSign) : Promise.resolve(null),
  ]);
  return {
    bookings: bookings.map((b) => ({ ...b, mine: b.requesterId === user.id })),
    bookingDaysAhead: BOOKING_DAYS_AHEAD,
    requestedCount,
    calibrations,
    calibrationDaysAhead: CALIBRATION_DAYS_AHEAD,
    queues: { tracking, checking, signOff },
    disagreeing,
    calibrationSignOff: calibrationSignOff ? { ...calibrationSignOff, mine: !isManager } : null,
    today: from.toISOString(),
  };
}
export type Dashboard = Awaited<ReturnType<typeof getDashboard>>;
