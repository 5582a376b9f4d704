import { Op, Transaction, type WhereOptions } from "sequelize";
import { Booking, Equipment, User, locking, sequelize } from "./db";
import { env } from "./env";
import { enqueueMail, mailQueued, type MailQueued } from "./mail/outbox";
import { getLabSettings, getLabTimeZone } from "./settings";
import type { CurrentUser } from "./auth/permissions";
import { bookingStateLabels, MAX_BOOKING_DAYS, spinUpLeadS, tableBookingCaution, type BookingState } from "~/lib/bookings";
import { formatDuration, timeFormat, type TimeFormat } from "~/lib/time-format";
import type { BookingChangeView, BookingView } from "./openapi/responses/bookings";

/** A refusal with the HTTP status and API code that say why. */
export class BookingError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly field?: string,
  ) {
    super(message);
  }
}

export interface BookingRequest {
  equipmentId: number;
  start: Date;
  end: Date;
  purpose: string;
  plannedRateRpm?: number;
  plannedDepthM?: number;
  /** Move the start earlier by the spin-up lead time (needs the planned rate and depth). */
  addSpinUpLead?: boolean;
}

/** A request a minute old may still start "now"; anything earlier is a slot in the past. */
const PAST_GRACE_MS = 60_000;

async function labManagerEmails(transaction: Transaction) {
  const managers = await User.findAll({ where: { role: "lab_manager", active: true }, order: [["id", "ASC"]], transaction });
  return managers.map((m) => m.email);
}

function link(booking: Booking) {
  return `${env.appUrl}/bookings/${booking.id}`;
}

/** The slot on the lab's clock, with the zone: "3 Dec 2026, 09:50–11:50 CET". */
function slotText(b: Booking, time: TimeFormat) {
  return time.range(b.startAt, b.endAt);
}

async function labTime(transaction: Transaction) {
  return timeFormat(await getLabTimeZone(transaction));
}

/** Any approved booking of the same item that overlaps [start, end), read inside the caller's transaction. */
function approvedOverlap(equipmentId: number, start: Date, end: Date, t: Transaction, exceptId?: number) {
  return Booking.findOne({
    where: {
      equipmentId,
      state: "approved",
      startAt: { [Op.lt]: end },
      endAt: { [Op.gt]: start },
      ...(exceptId ? { id: { [Op.ne]: exceptId } } : {}),
    },
    transaction: t,
  });
}

function conflictError(other: Booking, time: TimeFormat) {
  return new BookingError(
    409,
    "booking_conflict",
    `It overlaps booking #${other.id} (approved, ${slotText(other, time)}). Two approved bookings never share an item.`,
  );
}

/** The item, locked: requests and approvals of one item take turns from here to their commit. */
async function loadItemForBooking(equipmentId: number, t: Transaction) {
  const item = await Equipment.findByPk(equipmentId, locking(t));
  if (!item) throw new BookingError(404, "not_found", "That piece of equipment does not exist.", "equipmentId");
  if (item.status !== "in_service") {
    throw new BookingError(
      422,
      "equipment_unavailable",
      `${item.name} is ${item.status === "retired" ? "retired" : "out of service"} and cannot be booked.`,
      "equipmentId",
    );
  }
  return item;
}

/**
 * Requests a slot. Checks and the insert share one transaction, after the item's row lock: an
 * approval of an overlapping booking commits either before the check (and is seen) or after it.
 */
export async function createBooking(input: BookingRequest, requester: Pick<CurrentUser, "id" | "name">) {
  if (!(input.start instanceof Date) || Number.isNaN(input.start.getTime()) || Number.isNaN(input.end.getTime())) {
    throw new BookingError(400, "invalid_time", "Start and end must be real times.", "start");
  }
  let start = input.start;
  const end = input.end;
  if (end.getTime() <= start.getTime()) throw new BookingError(422, "invalid_slot", "The end must be after the start.", "end");
  let lead: number | null = null;
  if (input.addSpinUpLead) {
    if (!input.plannedRateRpm || !input.plannedDepthM) {
      throw new BookingError(422, "invalid_slot", "Give the planned rate and depth to add the spin-up lead time.", "addSpinUpLead");
    }
    const settings = await getLabSettings();
    lead = spinUpLeadS(input.plannedDepthM, input.plannedRateRpm, settings.spinUpTimesToWait);
    // Whole minutes, earlier: a start time people can read off a clock.
    start = new Date(Math.floor((start.getTime() - lead * 1000) / 60_000) * 60_000);
  }
  if (start.getTime() < Date.now() - PAST_GRACE_MS) {
    throw new BookingError(422, "slot_in_past", lead ? "With the spin-up lead time the slot would start in the past." : "That slot is in the past.", "start");
  }
  if (end.getTime() - start.getTime() > MAX_BOOKING_DAYS * 86_400_000) {
    throw new BookingError(422, "invalid_slot", `A booking can be at most ${MAX_BOOKING_DAYS} days long.`, "end");
  }
  // The mail is queued in the same transaction: it exists exactly when the booking does.
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    const item = await loadItemForBooking(input.equipmentId, t);
    const time = await labTime(t);
    const other = await approvedOverlap(item.id, start, end, t);
    if (other) throw conflictError(other, time);
    const booking = await Booking.create(
      {
        equipmentId: item.id,
        requesterId: requester.id,
        state: "requested",
        startAt: start,
        endAt: end,
        purpose: input.purpose.trim(),
        plannedRateRpm: input.plannedRateRpm ?? null,
        plannedDepthM: input.plannedDepthM ?? null,
        spinUpLeadS: lead,
        decidedById: null,
        decidedAt: null,
        declineReason: null,
        cancelledById: null,
        cancelledAt: null,
      },
      { transaction: t },
    );
    const mail = await enqueueMail(
      {
        to: await labManagerEmails(t),
        subject: `Booking requested: ${item.name}, ${slotText(booking, time)}`,
        text: [
          `${requester.name} asks for ${item.name}, ${slotText(booking, time)}.`,
          `Purpose: ${booking.purpose}`,
          ...(lead ? [`The start includes ${formatDuration(lead)} of spin-up lead time.`] : []),
          "",
          `Approve or decline it: ${link(booking)}`,
        ].join("\n"),
      },
      { transaction: t },
    );
    return { booking, mail: mailQueued(mail) };
  });
}

type Decision = "approve" | "decline";

async function decide(id: number, manager: Pick<CurrentUser, "id" | "role" | "name">, decision: Decision, reason?: string) {
  if (manager.role !== "lab_manager") throw new BookingError(403, "forbidden", "Only a lab manager approves or declines bookings.");
  // Exactly one of two racing approvals wins, on either database: each locks the booking, then its item, before
  // checking (row-lock.ts; on SQLite the write queue runs one transaction at a time anyway). A second approval of
  // the same item waits for the first to commit, then reads the overlap afresh inside its own transaction and is
  // refused. The decision's mail is queued inside its transaction: a decision that rolls back leaves no mail, and
  // one that commits cannot lose its mail to a crash.
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    const booking = await Booking.findByPk(id, locking(t));
    if (!booking) throw new BookingError(404, "not_found", "That booking does not exist.");
    if (booking.state !== "requested") {
      throw new BookingError(
        409,
        "invalid_state",
        `That booking is ${bookingStateLabels[booking.state].toLowerCase()} already; only a requested booking can be ${decision === "approve" ? "approved" : "declined"}.`,
      );
    }
    const item = await Equipment.findByPk(booking.equipmentId, locking(t));
    if (decision === "approve") {
      if (!item || item.status !== "in_service") {
        throw new BookingError(422, "equipment_unavailable", `${item?.name ?? "That item"} is not in service, so the booking cannot be approved.`);
      }
      if (booking.endAt.getTime() <= Date.now()) throw new BookingError(422, "slot_in_past", "That slot is over; there is nothing left to approve.");
      const other = await approvedOverlap(booking.equipmentId, booking.startAt, booking.endAt, t, booking.id);
      if (other) throw conflictError(other, await labTime(t));
    }
    await booking.update(
      {
        state: decision === "approve" ? "approved" : "declined",
        decidedById: manager.id,
        decidedAt: new Date(),
        declineReason: decision === "decline" ? reason!.trim() : null,
      },
      { transaction: t },
    );
    const requester = await User.findByPk(booking.requesterId, { transaction: t });
    const name = item?.name ?? `item #${booking.equipmentId}`;
    const time = await labTime(t);
    const mail = await enqueueMail(
      {
        to: requester ? [requester.email] : [],
        subject: decision === "approve" ? `Booking approved: ${name}, ${slotText(booking, time)}` : `Booking declined: ${name}, ${slotText(booking, time)}`,
        text: [
          decision === "approve"
            ? `${manager.name} approved your booking of ${name}, ${slotText(booking, time)}.`
            : `${manager.name} declined your booking of ${name}, ${slotText(booking, time)}.\nReason: ${booking.declineReason}`,
          `Purpose: ${booking.purpose}`,
          ...(decision === "approve" && item?.kind === "table" ? ["", tableBookingCaution] : []),
          "",
          `The booking: ${link(booking)}`,
          ...(decision === "approve" ? [`Add it to your calendar: ${env.appUrl}/api/v1/bookings/${booking.id}/ics`] : []),
        ].join("\n"),
      },
      { transaction: t },
    );
    return { booking, mail: mailQueued(mail) };
  });
}

export async function approveBooking(id: number, manager: Pick<CurrentUser, "id" | "role" | "name">) {
  return decide(id, manager, "approve");
}

export async function declineBooking(id: number, manager: Pick<CurrentUser, "id" | "role" | "name">, reason: string) {
  if (!reason || reason.trim().length < 3) throw new BookingError(422, "reason_required", "Give a reason for declining (a few words).", "reason");
  return decide(id, manager, "decline", reason);
}

/** The requester or a lab manager cancels a requested or approved booking whose slot is not over. */
export async function cancelBooking(id: number, user: Pick<CurrentUser, "id" | "role" | "name">) {
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    const booking = await Booking.findByPk(id, locking(t));
    if (!booking) throw new BookingError(404, "not_found", "That booking does not exist.");
    if (booking.requesterId !== user.id && user.role !== "lab_manager") {
      throw new BookingError(403, "forbidden", "Only the person who asked for it or a lab manager can cancel a booking.");
    }
    if (booking.state !== "requested" && booking.state !== "approved") {
      throw new BookingError(409, "invalid_state", `That booking is ${bookingStateLabels[booking.state].toLowerCase()}; there is nothing to cancel.`);
    }
    if (booking.endAt.getTime() <= Date.now()) throw new BookingError(422, "slot_in_past", "That slot is over; there is nothing to cancel.");
    const wasApproved = booking.state === "approved";
    await booking.update({ state: "cancelled", cancelledById: user.id, cancelledAt: new Date() }, { transaction: t });
    const requester = await User.findByPk(booking.requesterId, { transaction: t });
    const item = await Equipment.findByPk(booking.equipmentId, { transaction: t });
    const name = item?.name ?? `item #${booking.equipmentId}`;
    const byRequester = booking.requesterId === user.id;
    const time = await labTime(t);
    // The requester always hears; the lab managers too when someone frees a slot they had approved or still had to decide.
    const to = new Set<string>(requester ? [requester.email] : []);
    if (byRequester) for (const e of await labManagerEmails(t)) to.add(e);
    const mail = await enqueueMail(
      {
        to: [...to],
        subject: `Booking cancelled: ${name}, ${slotText(booking, time)}`,
        text: [
          `${byRequester ? `${user.name} cancelled their` : `${user.name} (lab manager) cancelled your`} ${wasApproved ? "approved" : "requested"} booking of ${name}, ${slotText(booking, time)}.`,
          `Purpose: ${booking.purpose}`,
          "",
          `The booking: ${link(booking)}`,
        ].join("\n"),
      },
      { transaction: t },
    );
    return { booking, mail: mailQueued(mail) };
  });
}

export function getBooking(id: number) {
  return Number.isInteger(id) && id > 0 ? Booking.findByPk(id) : Promise.resolve(null);
}

export interface BookingFilter {
  equipmentId?: number;
  state?: BookingState;
  from?: Date;
  to?: Date;
  requesterId?: number;
  limit?: number;
}

/** Bookings that touch [from, to) (either bound optional), soonest first. */
export function listBookings(filter: BookingFilter = {}) {
  const where: WhereOptions<Booking> = {
    ...(filter.equipmentId ? { equipmentId: filter.equipmentId } : {}),
    ...(filter.state ? { state: filter.state } : {}),
    ...(filter.requesterId ? { requesterId: filter.requesterId } : {}),
    ...(filter.from ? { endAt: { [Op.gt]: filter.from } } : {}),
    ...(filter.to ? { startAt: { [Op.lt]: filter.to } } : {}),
  };
  return Booking.findAll({
    where,
    order: [
      ["startAt", "ASC"],
      ["id", "ASC"],
    ],
    limit: filter.limit ?? 500,
  });
}

export async function serializeBookings(rows: Booking[]) {
  const userIds = [...new Set(rows.flatMap((b) => [b.requesterId, b.decidedById, b.cancelledById]).filter((v): v is number => v !== null))];
  const itemIds = [...new Set(rows.map((b) => b.equipmentId))];
  const [users, items] = await Promise.all([
    userIds.length ? User.findAll({ where: { id: { [Op.in]: userIds } } }) : [],
    itemIds.length ? Equipment.findAll({ where: { id: { [Op.in]: itemIds } } }) : [],
  ]);
  const userName = new Map(users.map((u) => [u.id, u.name]));
  const itemById = new Map(items.map((i) => [i.id, i]));
  return rows.map((b): BookingView => ({
    id: b.id,
    equipmentId: b.equipmentId,
    equipmentName: itemById.get(b.equipmentId)?.name ?? `#${b.equipmentId}`,
    equipmentKind: itemById.get(b.equipmentId)?.kind ?? null,
    state: b.state,
    start: b.startAt.toISOString(),
    end: b.endAt.toISOString(),
    purpose: b.purpose,
    plannedRateRpm: b.plannedRateRpm,
    plannedDepthCm: b.plannedDepthM === null ? null : Number((b.plannedDepthM * 100).toPrecision(6)),
    spinUpLeadMinutes: b.spinUpLeadS === null ? null : Number((b.spinUpLeadS / 60).toFixed(1)),
    requesterId: b.requesterId,
    requesterName: userName.get(b.requesterId) ?? "—",
    decidedById: b.decidedById,
    decidedByName: b.decidedById ? (userName.get(b.decidedById) ?? "—") : null,
    decidedAt: b.decidedAt?.toISOString() ?? null,
    declineReason: b.declineReason,
    cancelledById: b.cancelledById,
    cancelledAt: b.cancelledAt?.toISOString() ?? null,
    createdAt: b.createdAt.toISOString(),
  }));
}
export type { BookingView };

export async function serializeBooking(b: Booking): Promise<BookingView> {
  const [view] = await serializeBookings([b]);
  if (!view) throw new Error(`booking ${b.id} could not be serialised`);
  return view;
}

/** A booking as a change answers it: the booking and the e-mail the change queued. */
export async function serializeBookingChange(b: Booking, mail: MailQueued): Promise<BookingChangeView> {
  return { ...(await serializeBooking(b)), mail: mail.queued ? { queued: true as const, outboxId: mail.id } : { queued: false as const } };
}

export type { MailQueued };
