/**
 * Which calibration record counts at a moment: per item and kind the latest signed by then, in force
 * unless past due. The run log, the theory check, reminders and the records' standing all read it here.
 */
import { Op, Transaction } from "sequelize";
import { Calibration, Equipment } from "./db";
import { trueRateFromCalibration as trueRateFromLine, type CalibrationKind, type CalibrationStanding } from "~/lib/calibrations";

/** The record that counts for (item, kind) at a moment: the latest signed one done and signed by then. */
export async function latestSigned(equipmentIds: number[], at: Date, transaction?: Transaction) {
  if (equipmentIds.length === 0) return [];
  const rows = await Calibration.findAll({
    transaction,
    where: { equipmentId: { [Op.in]: equipmentIds }, signedOffAt: { [Op.lte]: at }, performedAt: { [Op.lte]: at } },
    order: [
      ["performedAt", "DESC"],
      ["id", "DESC"],
    ],
  });
  const seen = new Map<string, Calibration>();
  for (const r of rows) {
    const key = `${r.equipmentId}:${r.kind}`;
    if (!seen.has(key)) seen.set(key, r);
  }
  return [...seen.values()];
}

export interface CalibrationInForce {
  id: number;
  kind: CalibrationKind;
  equipmentId: number;
  performedAt: string;
  signedOffAt: string;
  dueAt: string;
  passed: boolean | null;
  /** rate */
  slope: number | null;
  intercept: number | null;
  /** scale */
  scalePxPerM: number | null;
  scaleUncertaintyPxPerM: number | null;
  /** timing */
  trueFrameRateFps: number | null;
  trueFrameRateUncertaintyFps: number | null;
}

/**
 * The calibrations in force at `at` for these items: per item and kind, the latest record signed
 * off by then, provided it is not past due at `at`. Times are ISO strings, ready to store on a run.
 */
export async function calibrationsInForce(equipmentIds: number[], at: Date, transaction?: Transaction): Promise<CalibrationInForce[]> {
  const latest = await latestSigned(equipmentIds, at, transaction);
  return latest
    .filter((c) => c.dueAt.getTime() >= at.getTime())
    .sort((a, b) => a.equipmentId - b.equipmentId || a.kind.localeCompare(b.kind))
    .map((c) => ({
      id: c.id,
      kind: c.kind,
      equipmentId: c.equipmentId,
      performedAt: c.performedAt.toISOString(),
      signedOffAt: c.signedOffAt!.toISOString(),
      dueAt: c.dueAt.toISOString(),
      passed: c.passed,
      slope: c.slope,
      intercept: c.interceptRpm,
      scalePxPerM: c.scalePxPerM,
      scaleUncertaintyPxPerM: c.scaleUncertaintyPxPerM,
      trueFrameRateFps: c.trueFrameRateFps,
      trueFrameRateUncertaintyFps: c.trueFrameRateUncertaintyFps,
    }));
}

export interface PastDueAtRun {
  id: number;
  kind: CalibrationKind;
  equipmentId: number;
  dueAt: string;
}

/** Latest signed records of these items that were already past due at `at`: what a run made then must be flagged for. */
export async function calibrationsPastDueAt(equipmentIds: number[], at: Date, transaction?: Transaction): Promise<PastDueAtRun[]> {
  const latest = await latestSigned(equipmentIds, at, transaction);
  return latest
    .filter((c) => c.dueAt.getTime() < at.getTime())
    .map((c) => ({ id: c.id, kind: c.kind, equipmentId: c.equipmentId, dueAt: c.dueAt.toISOString() }));
}

export interface RateCalibrationInForce {
  id: number;
  slope: number;
  intercept: number;
  slopeStdError: number;
  interceptStdError: number;
  slopeInterceptCovariance: number;
  residualSd: number;
  passed: boolean;
  performedAt: string;
  dueAt: string;
}

/** The table's rate calibration in force at `at`, or null (none signed, or the latest is past due). */
export async function rateCalibrationInForce(tableId: number, at: Date): Promise<RateCalibrationInForce | null> {
  const [latest] = (await latestSigned([tableId], at)).filter((c) => c.kind === "rate");
  if (!latest || latest.dueAt.getTime() < at.getTime()) return null;
  return {
    id: latest.id,
    slope: latest.slope!,
    intercept: latest.interceptRpm!,
    slopeStdError: latest.slopeStdError!,
    interceptStdError: latest.interceptStdErrorRpm!,
    slopeInterceptCovariance: latest.slopeInterceptCovarianceRpm!,
    residualSd: latest.residualSdRpm!,
    passed: Boolean(latest.passed),
    performedAt: latest.performedAt.toISOString(),
    dueAt: latest.dueAt.toISOString(),
  };
}

/** True rate at a set rate from the calibration in force, with the line's standard error there (see lib/calibrations). */
export function trueRateFromCalibration(cal: RateCalibrationInForce, setRpm: number) {
  return trueRateFromLine(cal, setRpm);
}

export interface DueCalibration {
  id: number;
  kind: CalibrationKind;
  equipmentId: number;
  equipmentName: string;
  dueAt: string;
  pastDue: boolean;
  daysLeft: number;
}

/**
 * Records that count now (latest signed per item and kind, equipment not retired) and fall due
 * within `days` or are already past due; past due first, then soonest due.
 */
export async function listCalibrationsDueOrExpired(days: number, at: Date = new Date()): Promise<DueCalibration[]> {
  const items = await Equipment.findAll({ where: { status: { [Op.ne]: "retired" } } });
  const names = new Map(items.map((i) => [i.id, i.name]));
  const latest = await latestSigned([...names.keys()], at);
  const horizon = at.getTime() + days * 86_400_000;
  return latest
    .filter((c) => c.dueAt.getTime() <= horizon)
    .map((c) => ({
      id: c.id,
      kind: c.kind,
      equipmentId: c.equipmentId,
      equipmentName: names.get(c.equipmentId) ?? `#${c.equipmentId}`,
      dueAt: c.dueAt.toISOString(),
      pastDue: c.dueAt.getTime() < at.getTime(),
      daysLeft: Math.floor((c.dueAt.getTime() - at.getTime()) / 86_400_000),
    }))
    .sort((a, b) => Number(b.pastDue) - Number(a.pastDue) || a.dueAt.localeCompare(b.dueAt));
}

/** Where each record stands now: a draft, in force, superseded by a later signed one, or past due. */
export async function standingOf(records: Calibration[], at: Date = new Date()): Promise<Map<number, CalibrationStanding>> {
  const ids = [...new Set(records.map((r) => r.equipmentId))];
  const latest = new Map((await latestSigned(ids, at)).map((c) => [`${c.equipmentId}:${c.kind}`, c.id]));
  const out = new Map<number, CalibrationStanding>();
  for (const r of records) {
    if (!r.signedOffAt) out.set(r.id, "draft");
    else if (latest.get(`${r.equipmentId}:${r.kind}`) !== r.id) out.set(r.id, "superseded");
    else out.set(r.id, r.dueAt.getTime() < at.getTime() ? "past_due" : "in_force");
  }
  return out;
}
