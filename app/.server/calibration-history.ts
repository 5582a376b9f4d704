import type { RunHistoryEntry } from "./runs/record";
import type { Transaction } from "sequelize";
import { Calibration, CalibrationHistory, User } from "./db";
import { getLabTimeZone } from "./settings";
import { zonedDay } from "~/lib/time-format";

/** The entered fields a history line is kept for, with the words the page shows; results follow from them. */
export const calibrationFieldLabels: Record<string, string> = {
  created: "recorded",
  meterId: "rate meter",
  readings: "readings",
  performedAt: "calibration date",
  dueAt: "due date",
  notes: "notes",
  knownLengthM: "known length (m)",
  knownLengthUncertaintyM: "uncertainty of the known length (m)",
  lengthPx: "length in the image (px)",
  lengthUncertaintyPx: "uncertainty in pixels",
  nominalFrameRateFps: "nominal frame rate (frames/s)",
  frameIntervals: "frame intervals counted",
  frameIntervalsUncertainty: "uncertainty of the count",
  referenceElapsedS: "elapsed time by the reference (s)",
  referenceElapsedUncertaintyS: "uncertainty of the elapsed time (s)",
  attachment: "file attached",
  attachmentRemoved: "file removed",
  signedOff: "signed off",
};

/** Calibration dates are days in the lab's time zone; everything else is shown as stored. */
const show = (v: unknown, zone: string) =>
  v === null || v === undefined
    ? null
    : v instanceof Date
      ? zonedDay(v, zone)
      : typeof v === "object"
        ? JSON.stringify(v)
        : (v as string | number | boolean | bigint).toString();

/** One history line, written inside the caller's transaction so it stands or falls with the change. */
export async function noteCalibrationChange(t: Transaction, calibrationId: number, userId: number, field: string, oldValue: unknown, newValue: unknown) {
  const zone = oldValue instanceof Date || newValue instanceof Date ? await getLabTimeZone(t) : "UTC";
  return CalibrationHistory.create({ calibrationId, userId, field, oldValue: show(oldValue, zone), newValue: show(newValue, zone) }, { transaction: t });
}

/** The entered fields an edit changes, old → new as shown; taken before the edit is written. */
export function calibrationEdits(cal: Calibration, next: Record<string, unknown>, zone: string) {
  return Object.keys(calibrationFieldLabels)
    .filter((field) => field in next)
    .map((field) => ({ field, oldValue: show(cal.get(field as keyof Calibration), zone), newValue: show(next[field], zone) }))
    .filter((c) => c.oldValue !== c.newValue);
}

/** A line for each of those changes, in the edit's transaction. */
export async function noteCalibrationEdits(t: Transaction, calibrationId: number, userId: number, edits: ReturnType<typeof calibrationEdits>) {
  for (const e of edits) await noteCalibrationChange(t, calibrationId, userId, e.field, e.oldValue, e.newValue);
}

/** A calibration's history reads like a run's: one line per change, with who made it. */
export type CalibrationHistoryEntry = RunHistoryEntry;

/** Every change to a record, oldest first, with people's names. */
export async function getCalibrationHistory(calibrationId: number): Promise<CalibrationHistoryEntry[]> {
  const rows = await CalibrationHistory.findAll({
    where: { calibrationId },
    order: [
      ["createdAt", "ASC"],
      ["id", "ASC"],
    ],
  });
  const userIds = [...new Set(rows.map((r) => r.userId).filter((id): id is number => id !== null))];
  const users = userIds.length ? await User.findAll({ where: { id: userIds }, attributes: ["id", "name"] }) : [];
  const names = new Map(users.map((u) => [u.id, u.name]));
  return rows.map((r) => ({
    id: r.id,
    at: r.createdAt.toISOString(),
    who: r.userId === null ? null : { id: r.userId, name: names.get(r.userId) ?? `#${r.userId}` },
    field: r.field,
    fieldLabel: calibrationFieldLabels[r.field] ?? r.field,
    oldValue: r.oldValue,
    newValue: r.newValue,
  }));
}
