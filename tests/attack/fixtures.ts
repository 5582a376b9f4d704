/**
 * The small lab every attack runs against: one person of each role, equipment, a run, a booking
 * and a calibration record, all the technician's, so "allowed" requests reach real records.
 */
import { Booking, Calibration, migrate } from "~/.server/db";
import { createRun } from "~/.server/runs/service";
import { runInput, seedRunLab } from "~/.server/runs/testing";
import { roles, type Role } from "~/lib/roles";

export async function attackLab() {
  await migrate();
  const lab = await seedRunLab();
  const run = await createRun(runInput(lab), lab.technician);
  const people = { technician: lab.technician, instructor: lab.instructor, lab_manager: lab.manager };
  // A booking of each person's own, so cancelling "your booking" is tried on one that is theirs.
  const bookings = {} as Record<Role, Booking>;
  for (const [i, role] of roles.entries()) {
    const start = new Date(Date.now() + (3 + i) * 86_400_000);
    bookings[role] = await Booking.create({
      equipmentId: lab.tableA.id,
      requesterId: people[role].id,
      state: "requested",
      startAt: start,
      endAt: new Date(start.getTime() + 7_200_000),
      purpose: "Coriolis demonstration",
      plannedRateRpm: null,
      plannedDepthM: null,
      spinUpLeadS: null,
      decidedById: null,
      decidedAt: null,
      declineReason: null,
      cancelledById: null,
      cancelledAt: null,
    } as never);
  }
  const calibration = await Calibration.create({
    kind: "scale",
    equipmentId: lab.camera.id,
    meterId: null,
    performedById: lab.technician.id,
    performedAt: new Date(Date.now() - 86_400_000),
    dueAt: new Date(Date.now() + 180 * 86_400_000),
    notes: null,
    knownLengthM: 0.3,
    knownLengthUncertaintyM: 0.0005,
    lengthPx: 600,
    lengthUncertaintyPx: 1,
    scalePxPerM: 2000,
    scaleUncertaintyPxPerM: 7,
    signedOffById: null,
    signedOffAt: null,
  } as never);
  return { ...lab, people, run, bookings, calibration };
}
export type AttackLab = Awaited<ReturnType<typeof attackLab>>;

/** Real ids for a route's parameters, chosen by the name of the collection before each one. */
export function paramsFor(pattern: string, lab: AttackLab, role: Role | null = null): Record<string, string> {
  const byCollection: Record<string, number> = {
    runs: lab.run.id,
    bookings: lab.bookings[role ?? "technician"].id,
    calibrations: lab.calibration.id,
    equipment: lab.tableA.id,
  };
  const params: Record<string, string> = {};
  const segments = pattern.split("/");
  segments.forEach((s, i) => {
    if (!s.startsWith(":")) return;
    const name = s.slice(1);
    const collection = segments[i - 1] ?? "";
    // Parameters naming things the lab does not have (a frame, an attachment, a secret) get an id that finds nothing.
    params[name] = name === "token" ? "not-a-real-secret" : String(byCollection[collection] ?? 999_999);
  });
  return params;
}
