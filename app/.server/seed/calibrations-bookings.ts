import { Booking, Calibration, Equipment, User } from "../db";
import { createCalibration, toDayString } from "../calibrations";
import { spinUpLeadS } from "~/lib/bookings";
import { settingDefaults } from "~/lib/settings";
import { systemTimeZone } from "~/lib/time-format";
import type { CalibrationInput } from "~/lib/validation/calibrations";
import { addDemoStep } from "./demo";

const DAY = 86_400_000;
// A fresh demo lab has no time zone set, so it keeps the server's.
const day = (offset: number) => toDayString(new Date(Date.now() + offset * DAY), systemTimeZone());
/** A local time `offset` days from today at hh:mm, for bookings people can read at a glance. */
function at(offset: number, hh: number, mm = 0) {
  const d = new Date(Date.now() + offset * DAY);
  d.setHours(hh, mm, 0, 0);
  return d;
}

async function find(model: "user" | "item", key: string) {
  const row = model === "user" ? await User.findOne({ where: { email: key } }) : await Equipment.findOne({ where: { name: key } });
  if (!row) throw new Error(`demo seed: ${key} is missing`);
  return row;
}

/** Records through the same function as the pages, then signed as the lab manager would have, a day later. */
async function record(input: CalibrationInput, performerId: number, signedById: number | null) {
  const cal = await createCalibration(input, { id: performerId });
  if (signedById)
    await Calibration.update({ signedOffById: signedById, signedOffAt: new Date(cal.performedAt.getTime() + DAY + 3_600_000) }, { where: { id: cal.id } });
  return cal;
}

// Small, fixed scatter on the readings, as a real tachometer shows.
const scatter = [0.006, -0.009, 0.004, 0.008, -0.007];

addDemoStep({
  name: "calibrations and bookings",
  order: 2,
  async run() {
    const user = (email: string) => find("user", email);
    const [manager, tech, tech2, instructor, instructor2] = await Promise.all([
      user("manager@tankside.example"),
      user("tech@tankside.example"),
      user("tech2@tankside.example"),
      user("instructor@tankside.example"),
      user("instructor2@tankside.example"),
    ]);
    const item = (name: string) => find("item", name);
    const [tableA, tableB, cam1, cam2, tach, gate] = await Promise.all([
      item("Table A (east bench)"),
      item("Table B (west bench)"),
      item("Overhead camera 1"),
      item("Overhead camera 2"),
      item("Optical tachometer T1"),
      item("Photogate PG-2"),
    ]);
    const sets = [5, 10, 15, 20, 25];

    // Table A: an older record, superseded by the one in force (measured = 1.004·set − 0.02 rpm).
    await record(
      {
        kind: "rate",
        equipmentId: tableA.id,
        meterId: gate.id,
        performedOn: day(-220),
        readings: sets.map((s, i) => ({ setRpm: s, measuredRpm: Number((1.006 * s - 0.03 + scatter[i]!).toFixed(3)) })),
        notes: "Photogate on the rim marker, 20 revolutions per reading.",
      },
      tech2.id,
      manager.id,
    );
    await record(
      {
        kind: "rate",
        equipmentId: tableA.id,
        meterId: tach.id,
        performedOn: day(-30),
        readings: sets.map((s, i) => ({ setRpm: s, measuredRpm: Number((1.004 * s - 0.02 + scatter[i]!).toFixed(3)) })),
        notes: "Tachometer on the reflective strip; table warmed up 10 min at each rate.",
      },
      tech.id,
      manager.id,
    );
    // Table B: past due (due three weeks ago): flagged on its page and in the reminder mail.
    await record(
      {
        kind: "rate",
        equipmentId: tableB.id,
        meterId: tach.id,
        performedOn: day(-200),
        dueOn: day(-20),
        readings: [4, 8, 12, 16].map((s, i) => ({ setRpm: s, measuredRpm: Number((0.997 * s + 0.01 + scatter[i]!).toFixed(3)) })),
      },
      tech.id,
      manager.id,
    );
    // Camera 1: scale and timing in force; camera 2: a scale record waiting for sign-off.
    await record(
      {
        kind: "scale",
        equipmentId: cam1.id,
        performedOn: day(-60),
        knownLengthMm: 500,
        knownLengthUncertaintyMm: 0.5,
        lengthPx: 350.1,
        lengthUncertaintyPx: 1.5,
        notes: "Steel rule on the tank floor, water at 10 cm.",
      },
      tech.id,
      manager.id,
    );
    await record(
      {
        kind: "timing",
        equipmentId: cam1.id,
        performedOn: day(-60),
        nominalFrameRateFps: 30,
        frameIntervals: 1798,
        frameIntervalsUncertainty: 1,
        referenceElapsedS: 60.0,
        referenceElapsedUncertaintyS: 0.02,
        notes: "Filmed the lab clock's second hand for one minute.",
      },
      tech.id,
      manager.id,
    );
    await record(
      { kind: "scale", equipmentId: cam2.id, performedOn: day(-2), knownLengthMm: 800, knownLengthUncertaintyMm: 0.5, lengthPx: 560.3, lengthUncertaintyPx: 2 },
      tech2.id,
      null,
    );

    // Bookings in every state.
    const lead = spinUpLeadS(0.12, 10, settingDefaults.spinUpTimesToWait);
    const base = {
      plannedRateRpm: null,
      plannedDepthM: null,
      spinUpLeadS: null,
      decidedById: null,
      decidedAt: null,
      declineReason: null,
      cancelledById: null,
      cancelledAt: null,
    };
    const now = new Date();
    await Booking.create({
      ...base,
      equipmentId: tableA.id,
      requesterId: instructor.id,
      state: "requested",
      startAt: at(2, 10),
      endAt: at(2, 12),
      purpose: "First-year demonstration: deflection to the right",
    });
    await Booking.create({
      ...base,
      equipmentId: tableA.id,
      requesterId: instructor.id,
      state: "approved",
      startAt: new Date(Math.floor((at(3, 14).getTime() - lead * 1000) / 60_000) * 60_000),
      endAt: at(3, 16),
      purpose: "Second-year lab: inertial circles",
      plannedRateRpm: 10,
      plannedDepthM: 0.12,
      spinUpLeadS: lead,
      decidedById: manager.id,
      decidedAt: now,
    });
    await Booking.create({
      ...base,
      equipmentId: tableB.id,
      requesterId: tech.id,
      state: "approved",
      startAt: at(1, 9),
      endAt: at(1, 11, 30),
      purpose: "Dye runs for the Ekman layer write-up",
      decidedById: manager.id,
      decidedAt: now,
    });
    await Booking.create({
      ...base,
      equipmentId: tableB.id,
      requesterId: instructor2.id,
      state: "declined",
      startAt: at(1, 10),
      endAt: at(1, 12),
      purpose: "Open day display",
      decidedById: manager.id,
      decidedAt: now,
      declineReason: "Table B is taken for dye runs that morning; Table A is free in the afternoon.",
    });
    await Booking.create({
      ...base,
      equipmentId: tableA.id,
      requesterId: instructor2.id,
      state: "cancelled",
      startAt: at(4, 9),
      endAt: at(4, 10),
      purpose: "Make-up session",
      cancelledById: instructor2.id,
      cancelledAt: now,
    });
    await Booking.create({
      ...base,
      equipmentId: cam1.id,
      requesterId: tech2.id,
      state: "requested",
      startAt: at(5, 13),
      endAt: at(5, 17),
      purpose: "Timing check against the new lab clock",
    });
  },
});
