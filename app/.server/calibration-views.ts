/** Calibration records as the pages and the API show them: names filled in, standing now, reminder and files. */
import { Op } from "sequelize";
import { Calibration, CalibrationAttachment, Equipment, User } from "./db";
import { findOutboxByKeys } from "./mail/outbox";
import { getLabTimeZone } from "./settings";
import { kindsForEquipment, type RateReading } from "~/lib/calibrations";
import type { EquipmentKind } from "~/lib/equipment";
import type { CalibrationView } from "./openapi/responses/calibrations";
import { toDayString } from "./calibrations";
import { standingOf } from "./calibrations-in-force";

/** The outbox key of a record's due reminder: one reminder per record, ever. */
export function calibrationReminderKey(calibrationId: number) {
  return `calibration-reminder:${calibrationId}`;
}

export function listCalibrations(filter: { equipmentId?: number } = {}) {
  return Calibration.findAll({
    where: filter.equipmentId ? { equipmentId: filter.equipmentId } : {},
    order: [
      ["performedAt", "DESC"],
      ["id", "DESC"],
    ],
  });
}

/** The page and API shape of a record, with names filled in and its standing now. */
export async function serializeCalibrations(records: Calibration[]) {
  const userIds = [...new Set(records.flatMap((r) => [r.performedById, r.signedOffById]).filter((v): v is number => v !== null))];
  const equipIds = [...new Set(records.flatMap((r) => [r.equipmentId, r.meterId]).filter((v): v is number => v !== null))];
  const [users, items, attachments, reminders, standing, zone] = await Promise.all([
    userIds.length ? User.findAll({ where: { id: { [Op.in]: userIds } } }) : [],
    equipIds.length ? Equipment.findAll({ where: { id: { [Op.in]: equipIds } } }) : [],
    records.length ? CalibrationAttachment.findAll({ where: { calibrationId: { [Op.in]: records.map((r) => r.id) } }, order: [["id", "ASC"]] }) : [],
    findOutboxByKeys(records.map((r) => calibrationReminderKey(r.id))),
    standingOf(records),
    getLabTimeZone(),
  ]);
  const userName = new Map(users.map((u) => [u.id, u.name]));
  const itemName = new Map(items.map((i) => [i.id, i.name]));
  return records.map((r): CalibrationView => ({
    id: r.id,
    kind: r.kind,
    equipmentId: r.equipmentId,
    equipmentName: itemName.get(r.equipmentId) ?? `#${r.equipmentId}`,
    meterId: r.meterId,
    meterName: r.meterId ? (itemName.get(r.meterId) ?? `#${r.meterId}`) : null,
    performedById: r.performedById,
    performedByName: userName.get(r.performedById) ?? "—",
    performedOn: toDayString(r.performedAt, zone),
    performedAt: r.performedAt.toISOString(),
    dueOn: toDayString(r.dueAt, zone),
    dueAt: r.dueAt.toISOString(),
    notes: r.notes,
    readings: r.readings ? (JSON.parse(r.readings) as RateReading[]) : null,
    slope: r.slope,
    interceptRpm: r.interceptRpm,
    slopeStdError: r.slopeStdError,
    interceptStdErrorRpm: r.interceptStdErrorRpm,
    slopeInterceptCovarianceRpm: r.slopeInterceptCovarianceRpm,
    residualSdRpm: r.residualSdRpm,
    maxResidualRpm: r.maxResidualRpm,
    maxDeviationRpm: r.maxDeviationRpm,
    maxDeviationPct: r.maxDeviationPct,
    tolerancePct: r.tolerancePct,
    passed: r.passed,
    knownLengthM: r.knownLengthM,
    knownLengthUncertaintyM: r.knownLengthUncertaintyM,
    lengthPx: r.lengthPx,
    lengthUncertaintyPx: r.lengthUncertaintyPx,
    scalePxPerM: r.scalePxPerM,
    scaleUncertaintyPxPerM: r.scaleUncertaintyPxPerM,
    nominalFrameRateFps: r.nominalFrameRateFps,
    frameIntervals: r.frameIntervals,
    frameIntervalsUncertainty: r.frameIntervalsUncertainty,
    referenceElapsedS: r.referenceElapsedS,
    referenceElapsedUncertaintyS: r.referenceElapsedUncertaintyS,
    trueFrameRateFps: r.trueFrameRateFps,
    trueFrameRateUncertaintyFps: r.trueFrameRateUncertaintyFps,
    frameRateDeviationPct: r.frameRateDeviationPct,
    signedOffById: r.signedOffById,
    signedOffByName: r.signedOffById ? (userName.get(r.signedOffById) ?? "—") : null,
    signedOffAt: r.signedOffAt ? r.signedOffAt.toISOString() : null,
    standing: standing.get(r.id)!,
    reminder: (() => {
      const m = reminders.find((x) => x.dedupeKey === calibrationReminderKey(r.id));
      return m ? { state: m.state, sentAt: m.sentAt?.toISOString() ?? null, lastError: m.lastError, attempts: m.attempts } : null;
    })(),
    attachments: attachments
      .filter((a) => a.calibrationId === r.id)
      .map((a) => ({
        id: a.id,
        originalName: a.originalName,
        contentType: a.contentType,
        sizeBytes: a.sizeBytes,
        url: `/api/v1/calibrations/${r.id}/attachments/${a.id}`,
      })),
  }));
}
export type { CalibrationView };

/** What the equipment page shows: each kind's standing now, the item's records, and its coming bookings. */
export async function equipmentCalibrationSummary(equipmentId: number, equipmentKind: EquipmentKind) {
  const records = await serializeCalibrations(await listCalibrations({ equipmentId }));
  const kinds = kindsForEquipment(equipmentKind).map((kind) => {
    const current = records.find((r) => r.kind === kind && (r.standing === "in_force" || r.standing === "past_due")) ?? null;
    return { kind, current: current ? { id: current.id, standing: current.standing, dueAt: current.dueAt } : null };
  });
  return { kinds, records };
}
