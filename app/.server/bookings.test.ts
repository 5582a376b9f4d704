import { afterAll, beforeAll, describe, expect, it } from "vitest";
import ICAL from "ical.js";
import { Op } from "sequelize";
import { Booking, CapturedMail, Equipment, OutboxMail, User, migrate, sequelize } from "./db";
import { BookingError, approveBooking, cancelBooking, createBooking, declineBooking, listBookings, serializeBooking } from "./bookings";
import { bookingIcs, createCalendarFeed, feedOwner, personalFeedIcs } from "./booking-calendar";
import { stopFakeSmtp } from "./mail/fake-smtp";
import { OutboxSender } from "./mail/outbox-sender";
import { env } from "./env";
import { ekmanSpinUpTimeS } from "~/lib/bookings";
import { formatDuration, timeFormat } from "~/lib/time-format";
import { getLabId, getLabTimeZone, setLabTimeZone } from "./settings";
import { unfold } from "~/lib/icalendar";

let table: Equipment;
let broken: Equipment;
let instructor: User;
let manager: User;
let manager2: User;
const asManager = () => ({ id: manager.id, role: "lab_manager" as const, name: manager.name });
const asInstructor = () => ({ id: instructor.id, role: "instructor" as const, name: instructor.name });
/** Delivers what is queued, as the server's sender does after each commit. */
const deliver = () => new OutboxSender().drain();
const hoursFromNow = (h: number) => new Date(Math.round((Date.now() + h * 3_600_000) / 60_000) * 60_000);

const tableDetails = { diameterM: 0.6, maxRateRpm: 30, flatTable: false, rateTolerancePct: 1 };

beforeAll(async () => {
  await migrate();
  table = await Equipment.create({ ...tableDetails, kind: "table", name: "Booking table" });
  broken = await Equipment.create({ ...tableDetails, kind: "table", name: "Broken table", status: "out_of_service" });
  instructor = await User.create({ email: "i@tankside.example", name: "Ida Instructor", role: "instructor", passwordHash: null, passwordChangedAt: null });
  manager = await User.create({ email: "m@tankside.example", name: "Mo Manager", role: "lab_manager", passwordHash: null, passwordChangedAt: null });
  manager2 = await User.create({ email: "m2@tankside.example", name: "Mia Manager", role: "lab_manager", passwordHash: null, passwordChangedAt: null });
});

afterAll(async () => {
  await stopFakeSmtp();
  await sequelize.close();
});

const request = (startH: number, endH: number, over: Partial<Parameters<typeof createBooking>[0]> = {}) =>
  createBooking({ equipmentId: table.id, start: hoursFromNow(startH), end: hoursFromNow(endH), purpose: "Inertial oscillation demo", ...over }, asInstructor());

describe("requesting", () => {
  it("creates a requested booking and mails every active lab manager a link to it", async () => {
    const { booking, mail } = await request(24, 26);
    expect(booking.state).toBe("requested");
    expect(mail.queued).toBe(true);
    await deliver();
    const got = await CapturedMail.findOne({
      where: { subject: `Booking requested: Booking table, ${timeFormat(await getLabTimeZone()).range(booking.startAt, booking.endAt)}` },
    });
    expect(got!.envelopeTo.split(", ").sort()).toEqual([manager2.email, manager.email].sort());
    expect(got!.textBody).toContain(`${env.appUrl}/bookings/${booking.id}`);
  });

  it("refuses end before start, a slot in the past, unknown and out-of-service equipment; nothing is saved", async () => {
    const before = await Booking.count();
    await expect(request(5, 4)).rejects.toMatchObject({ status: 422, code: "invalid_slot" });
    await expect(request(-3, -1)).rejects.toMatchObject({ status: 422, code: "slot_in_past" });
    await expect(request(5, 6, { equipmentId: 99999 })).rejects.toMatchObject({ status: 404 });
    await expect(request(5, 6, { equipmentId: broken.id })).rejects.toMatchObject({ status: 422, code: "equipment_unavailable" });
    expect(await Booking.count()).toBe(before);
  });

  it("moves the start earlier by the lab's spin-up times × τ = H/√(νΩ) when asked", async () => {
    const start = hoursFromNow(30);
    const { booking } = await createBooking(
      { equipmentId: table.id, start, end: hoursFromNow(32), purpose: "Spin-up first", plannedRateRpm: 10, plannedDepthM: 0.1, addSpinUpLead: true },
      asInstructor(),
    );
    // τ at 10 cm and 10 rpm with ν = 1e-6 m²/s: 0.1/√(1e-6·1.0472) ≈ 97.7 s; five of them ≈ 8.1 min.
    const tau = 0.1 / Math.sqrt(1e-6 * ((10 * 2 * Math.PI) / 60));
    expect(ekmanSpinUpTimeS(0.1, 10)).toBeCloseTo(tau, 9);
    expect(booking.spinUpLeadS).toBeCloseTo(5 * tau, 6);
    const movedBy = (start.getTime() - booking.startAt.getTime()) / 1000;
    expect(movedBy).toBeGreaterThanOrEqual(5 * tau);
    expect(movedBy).toBeLessThan(5 * tau + 60);
  });
});

describe("deciding", () => {
  it("two concurrent approvals of overlapping bookings: exactly one wins, the other gets booking_conflict", async () => {
    const a = (await request(48, 50)).booking;
    const b = (await request(49, 51)).booking;
    const results = await Promise.allSettled([
      approveBooking(a.id, asManager()),
      approveBooking(b.id, { id: manager2.id, role: "lab_manager", name: manager2.name }),
    ]);
    const won = results.filter((r) => r.status === "fulfilled");
    const lost = results.filter((r): r is PromiseRejectedResult => r.status === "rejected");
    expect(won).toHaveLength(1);
    expect(lost).toHaveLength(1);
    expect(lost[0]!.reason).toBeInstanceOf(BookingError);
    expect(lost[0]!.reason).toMatchObject({ status: 409, code: "booking_conflict" });
    const states = (await Booking.findAll({ where: { id: [a.id, b.id] } })).map((x) => x.state).sort();
    expect(states).toEqual(["approved", "requested"]);
  });

  it("only a lab manager decides; a decline needs a reason; each decision mails the requester", async () => {
    const { booking } = await request(72, 73);
    await expect(approveBooking(booking.id, { id: instructor.id, role: "instructor", name: instructor.name })).rejects.toMatchObject({ status: 403 });
    await expect(declineBooking(booking.id, asManager(), "")).rejects.toMatchObject({ status: 422 });
    const { mail } = await declineBooking(booking.id, asManager(), "The table is being levelled that day.");
    expect(mail.queued).toBe(true);
    await deliver();
    const last = await CapturedMail.findOne({ order: [["id", "DESC"]] });
    expect(last!.subject).toMatch(/^Booking declined: Booking table/);
    expect(last!.envelopeTo).toBe(instructor.email);
    expect(last!.textBody).toContain("The table is being levelled that day.");
    expect(last!.textBody).toContain(`/bookings/${booking.id}`);
    await expect(approveBooking(booking.id, asManager())).rejects.toMatchObject({ status: 409, code: "invalid_state" });
  });

  it("cannot approve a booking of an item that went out of service", async () => {
    const spare = await Equipment.create({ ...table.get({ plain: true }), id: undefined, name: "Spare table" });
    const { booking } = await createBooking(
      { equipmentId: spare.id, start: hoursFromNow(80), end: hoursFromNow(81), purpose: "Later failure" },
      asInstructor(),
    );
    await spare.update({ status: "out_of_service" });
    await expect(approveBooking(booking.id, asManager())).rejects.toMatchObject({ status: 422, code: "equipment_unavailable" });
    expect((await Booking.findByPk(booking.id))!.state).toBe("requested");
  });

  it("the requester or a lab manager cancels; someone else cannot", async () => {
    const { booking } = await request(90, 91);
    const other = await User.create({ email: "o@tankside.example", name: "Other Tech", role: "technician", passwordHash: null, passwordChangedAt: null });
    await expect(cancelBooking(booking.id, { id: other.id, role: "technician", name: other.name })).rejects.toMatchObject({ status: 403 });
    await approveBooking(booking.id, asManager());
    const { booking: cancelled, mail } = await cancelBooking(booking.id, asInstructor());
    expect(cancelled.state).toBe("cancelled");
    expect(mail.queued).toBe(true);
    await deliver();
    const last = await CapturedMail.findOne({ order: [["id", "DESC"]] });
    expect(last!.subject).toMatch(/^Booking cancelled/);
    expect(last!.envelopeTo.split(", ").sort()).toEqual([instructor.email, manager.email, manager2.email].sort());
    await expect(cancelBooking(booking.id, asManager())).rejects.toMatchObject({ status: 409 });
    expect((await listBookings({ state: "cancelled", equipmentId: table.id })).map((b) => b.id)).toContain(booking.id);
  });
});

describe("a decision and its mail are one transaction", () => {
  const decisionMail = (id: number) =>
    OutboxMail.findAll({ where: { subject: { [Op.like]: "Booking approved:%" }, textBody: { [Op.like]: `%/bookings/${id}\n%` } } });

  it("a committed approval has its mail queued before the call returns, so a crash right after cannot lose it", async () => {
    const { booking } = await request(110, 111);
    const { mail } = await approveBooking(booking.id, asManager());
    const rows = await decisionMail(booking.id);
    expect(rows).toHaveLength(1);
    expect(mail).toEqual({ queued: true, id: rows[0]!.id });
    expect(rows[0]!.state).toBe("queued");
    expect(rows[0]!.recipients).toBe(instructor.email);
    // A fresh sender (as after a restart) delivers it.
    expect((await deliver()).sent).toContain(rows[0]!.id);
    expect(await CapturedMail.count({ where: { subject: rows[0]!.subject } })).toBe(1);
  });

  it("an approval whose transaction fails after the mail was written leaves neither the decision nor the mail", async () => {
    const { booking } = await request(112, 113);
    OutboxMail.addHook("afterCreate", "fail-after-enqueue", () => {
      throw new Error("disk full");
    });
    try {
      await expect(approveBooking(booking.id, asManager())).rejects.toThrow("disk full");
    } finally {
      OutboxMail.removeHook("afterCreate", "fail-after-enqueue");
    }
    expect((await Booking.findByPk(booking.id))!.state).toBe("requested");
    expect(await decisionMail(booking.id)).toHaveLength(0);
  });

  it("a refused approval (already decided) queues no mail", async () => {
    const { booking } = await request(114, 115);
    await approveBooking(booking.id, asManager());
    await expect(approveBooking(booking.id, asManager())).rejects.toMatchObject({ status: 409 });
    expect(await decisionMail(booking.id)).toHaveLength(1);
  });
});

describe("iCalendar (RFC 5545), parsed with ical.js", () => {
  it("one booking: DTSTART/DTEND in UTC at the booked times, with its status", async () => {
    const { booking } = await request(100, 102.5);
    await approveBooking(booking.id, asManager());
    const text = await bookingIcs(await serializeBooking((await Booking.findByPk(booking.id))!));
    const cal = new ICAL.Component(ICAL.parse(text));
    expect(cal.name).toBe("vcalendar");
    expect(cal.getFirstPropertyValue("version")).toBe("2.0");
    const vevent = cal.getFirstSubcomponent("vevent")!;
    const event = new ICAL.Event(vevent);
    expect(event.startDate.zone?.tzid).toBe("UTC");
    expect(event.endDate.zone?.tzid).toBe("UTC");
    expect(event.startDate.toJSDate().getTime()).toBe(booking.startAt.getTime());
    expect(event.endDate.toJSDate().getTime()).toBe(booking.endAt.getTime());
    expect(vevent.getFirstPropertyValue("status")).toBe("CONFIRMED");
    expect(event.uid).toBe(`booking-${booking.id}@${await getLabId()}`);
    expect(text).toMatch(/DTSTART:\d{8}T\d{6}Z/);
  });

  it("a personal feed holds only the person's approved bookings and opens with a secret token", async () => {
    const token = await createCalendarFeed(instructor.id);
    expect((await feedOwner(token))!.id).toBe(instructor.id);
    expect(await feedOwner(token.slice(0, -2) + "xx")).toBeNull();
    const text = await personalFeedIcs(instructor.id);
    const events = new ICAL.Component(ICAL.parse(text)).getAllSubcomponents("vevent").map((v) => new ICAL.Event(v));
    const approved = await listBookings({ requesterId: instructor.id, state: "approved" });
    expect(approved.length).toBeGreaterThan(0);
    const labId = await getLabId();
    expect(events.map((e) => e.uid).sort()).toEqual(approved.map((b) => `booking-${b.id}@${labId}`).sort());
    // A new address replaces the old one.
    const again = await createCalendarFeed(instructor.id);
    expect(await feedOwner(token)).toBeNull();
    expect((await feedOwner(again))!.id).toBe(instructor.id);
  });
});

/** Every physical line of an iCalendar text, with its length in octets. */
const octetLengths = (text: string) =>
  text
    .split("\r\n")
    .filter((l) => l !== "")
    .map((l) => Buffer.byteLength(l, "utf8"));

describe("iCalendar folding and UIDs (RFC 5545 §3.1, §3.8.4.7), parsed with ical.js", () => {
  const longName = "Ørsted tank — west bench, the big one with the Ø-shaped rim — and its camera";
  const purpose = "Inertial circles for the Ø group — ".repeat(4).trim();

  it("folds every line at 75 octets without splitting a character; the name and purpose survive unfolding intact", async () => {
    const item = await Equipment.create({ ...tableDetails, kind: "table", name: longName });
    const { booking } = await createBooking({ equipmentId: item.id, start: hoursFromNow(300), end: hoursFromNow(302), purpose }, asInstructor());
    await approveBooking(booking.id, asManager());
    const file = await bookingIcs(await serializeBooking((await Booking.findByPk(booking.id))!));
    const feed = await personalFeedIcs(instructor.id);
    const uid = `booking-${booking.id}@${await getLabId()}`;
    for (const text of [file, feed]) {
      expect(Math.max(...octetLengths(text))).toBeLessThanOrEqual(75);
      // Some lines really were folded (the long summary), so the check above had something to check.
      expect(text).toMatch(/\r\n [^\r]/);
      // No line holds a broken UTF-8 sequence: each decodes to itself.
      for (const line of text.split("\r\n")) expect(Buffer.from(line, "utf8").toString("utf8")).toBe(line);
      const events = new ICAL.Component(ICAL.parse(text)).getAllSubcomponents("vevent").map((v) => new ICAL.Event(v));
      const event = events.find((e) => e.uid === uid)!;
      expect(event.summary).toBe(`${longName}: ${purpose}`);
      expect(event.description).toContain(`Purpose: ${purpose}`);
      expect(event.startDate.toJSDate().getTime()).toBe(booking.startAt.getTime());
      expect(event.endDate.toJSDate().getTime()).toBe(booking.endAt.getTime());
      // The text as written on the line, with RFC 5545's escaped commas.
      expect(unfold(text)).toContain(`SUMMARY:${longName.replaceAll(",", "\\,")}: ${purpose}`);
    }
  });

  it("a booking keeps its UID when APP_URL changes: the UID is built from the lab's stored identifier", async () => {
    const { booking } = await request(320, 321);
    await approveBooking(booking.id, asManager());
    const view = await serializeBooking((await Booking.findByPk(booking.id))!);
    const uidOf = async () => new ICAL.Event(new ICAL.Component(ICAL.parse(await bookingIcs(view))).getFirstSubcomponent("vevent")!).uid;
    const before = await uidOf();
    const saved = env.appUrl;
    try {
      (env as { appUrl: string }).appUrl = "https://tankside.other-host.example:8443";
      const after = await uidOf();
      expect(after).toBe(before);
      // The address did change in the file, so the UID held although the rest moved with it.
      expect(unfold(await bookingIcs(view))).toContain("URL:https://tankside.other-host.example:8443/bookings/");
    } finally {
      (env as { appUrl: string }).appUrl = saved;
    }
    expect(before).toMatch(/^booking-\d+@[0-9a-f-]{36}$/);
    expect(await getLabId()).toBe(await getLabId());
  });
});

describe("times and durations in booking mail", () => {
  const savedTz = process.env.TZ;

  it.each([
    ["Europe/Berlin", "Pacific/Honolulu", "09:50", "CET"],
    ["America/New_York", "Asia/Tokyo", "03:50", "GMT-5"],
  ])("a slot at 08:50Z reads %s's clock (%s on the server): %s %s", async (labZone, serverZone, clock, zoneName) => {
    process.env.TZ = serverZone;
    try {
      await setLabTimeZone(labZone);
      // A slot on 3 December of the coming year at 08:50Z–10:50Z (in winter in both zones).
      const year = new Date().getUTCFullYear() + 1;
      const start = new Date(`${year}-12-03T08:50:00Z`);
      const { booking } = await createBooking(
        { equipmentId: table.id, start, end: new Date(start.getTime() + 2 * 3_600_000), purpose: `Zone check ${labZone}` },
        asInstructor(),
      );
      const row = await OutboxMail.findOne({ where: { subject: { [Op.like]: `Booking requested:%` } }, order: [["id", "DESC"]] });
      expect(row!.textBody).toContain(`Zone check ${labZone}`);
      const later = clock === "09:50" ? "11:50" : "05:50";
      expect(row!.subject).toBe(`Booking requested: Booking table, 3 Dec ${year}, ${clock}–${later} ${zoneName}`);
      expect(row!.textBody).toContain(`Ida Instructor asks for Booking table, 3 Dec ${year}, ${clock}–${later} ${zoneName}.`);
      await cancelBooking(booking.id, asInstructor());
    } finally {
      process.env.TZ = savedTz;
      await setLabTimeZone("");
    }
  });

  it("the spin-up lead time in the mail is the text the booking's page shows (one duration rule)", async () => {
    const { booking } = await createBooking(
      {
        equipmentId: table.id,
        start: hoursFromNow(340),
        end: hoursFromNow(342),
        purpose: "Lead time wording",
        plannedRateRpm: 6,
        plannedDepthM: 0.12,
        addSpinUpLead: true,
      },
      asInstructor(),
    );
    const row = await OutboxMail.findOne({ where: { subject: { [Op.like]: `Booking requested:%` } }, order: [["id", "DESC"]] });
    const view = await serializeBooking(booking);
    // The booking page and list show formatDuration(spinUpLeadMinutes × 60); the mail must say the same words.
    const onPage = formatDuration(view.spinUpLeadMinutes! * 60);
    expect(onPage).toMatch(/^\d+(\.\d)? min$/);
    expect(row!.textBody).toContain(`The start includes ${onPage} of spin-up lead time.`);
    expect(formatDuration(booking.spinUpLeadS)).toBe(onPage);
  });
});
