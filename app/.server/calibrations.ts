import { Op, Transaction } from "sequelize";
import { Calibration, Equipment, locking, sequelize } from "./db";
import { getLabSettings, getLabTimeZone } from "./settings";
import { addDays, fromZonedInput, systemTimeZone, zonedDay } from "~/lib/time-format";
import { canEditCalibration, type CurrentUser } from "./auth/permissions";
import { calibrationEdits, noteCalibrationChange, noteCalibrationEdits } from "./calibration-history";
import {
  CalibrationInputError,
  calibrationKindFor,
  calibrationKindLabels,
  frameRateFromTiming,
  intervalDaysFor,
  fitRateCalibration,
  scaleFromKnownLength,
  type RateReading,
} from "~/lib/calibrations";
import type { CalibrationInput } from "~/lib/validation/calibrations";
import { DEFAULT_SCALE_TOLERANCE_PCT } from "~/lib/calibrations-applied";
import { kindLabels } from "~/lib/equipment";

/** A refusal with the HTTP status that says why (404 missing, 409 signed, 422 wrong equipment). */
export class CalibrationError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly field?: string,
  ) {
    super(message);
  }
}

const NOT_YOURS_MESSAGE = "Only the person who performed this calibration or a lab manager can change it or add files to it.";
const SIGNED_MESSAGE = "This calibration record is signed off and can no longer change. Record a new calibration to supersede it.";

/** A calibration date is a day in the lab's time zone: it starts at 00:00 there… */
function dayStart(day: string, zone: string): Date {
  return fromZonedInput(`${day}T00:00`, zone) ?? new Date(Number.NaN);
}
/** …and a due date holds through the whole of its day there. */
function dayEnd(day: string, zone: string): Date {
  return new Date(dayStart(addDays(day, 1), zone).getTime() - 1);
}
/** The lab's day of an instant, "2026-12-03"; without a zone, the server's (the lab's until one is set). */
export function toDayString(d: Date, zone: string = systemTimeZone()): string {
  return zonedDay(d, zone);
}

/** Works out every stored column from the form's input; throws CalibrationError/CalibrationInputError on bad input. */
async function columnsFor(input: CalibrationInput, t?: Transaction) {
  const item = await Equipment.findByPk(input.equipmentId, { transaction: t });
  if (!item) throw new CalibrationError(404, "not_found", "That piece of equipment does not exist.", "equipmentId");
  const wanted = calibrationKindFor[input.kind];
  if (item.kind !== wanted) {
    throw new CalibrationError(
      422,
      "wrong_equipment",
      `A ${calibrationKindLabels[input.kind].toLowerCase()} is made on a ${kindLabels[wanted].toLowerCase()}, and ${item.name} is a ${kindLabels[item.kind].toLowerCase()}.`,
      "equipmentId",
    );
  }
  const settings = await getLabSettings(t);
  const performedAt = dayStart(input.performedOn, settings.timeZone);
  if (performedAt.getTime() > Date.now()) {
    throw new CalibrationError(422, "invalid_date", "The calibration date cannot be in the future: record a calibration once it is done.", "performedOn");
  }
  const dueOn = input.dueOn ?? addDays(input.performedOn, intervalDaysFor(input.kind, settings));
  if (dueOn < input.performedOn) {
    throw new CalibrationError(422, "invalid_due_date", "The due date cannot be before the calibration date.", "dueOn");
  }
  const empty = {
    meterId: null,
    readings: null,
    slope: null,
    interceptRpm: null,
    slopeStdError: null,
    interceptStdErrorRpm: null,
    slopeInterceptCovarianceRpm: null,
    meanSetRateRpm: null,
    residualSdRpm: null,
    maxResidualRpm: null,
    maxDeviationRpm: null,
    maxDeviationPct: null,
    tolerancePct: null,
    passed: null,
    knownLengthM: null,
    knownLengthUncertaintyM: null,
    lengthPx: null,
    lengthUncertaintyPx: null,
    scalePxPerM: null,
    scaleUncertaintyPxPerM: null,
    nominalFrameRateFps: null,
    frameIntervals: null,
    frameIntervalsUncertainty: null,
    referenceElapsedS: null,
    referenceElapsedUncertaintyS: null,
    trueFrameRateFps: null,
    trueFrameRateUncertaintyFps: null,
    frameRateDeviationPct: null,
  };
  const common = { kind: input.kind, equipmentId: item.id, performedAt, dueAt: dayEnd(dueOn, settings.timeZone), notes: input.notes ?? null };
  try {
    if (input.kind === "rate") {
      const meter = input.meterId ? await Equipment.findByPk(input.meterId, { transaction: t }) : null;
      if (!meter || meter.kind !== "rate_meter") {
        throw new CalibrationError(422, "invalid_meter", "Choose a rate meter from the register for the readings.", "meterId");
      }
      const readings: RateReading[] = (input.readings ?? []).map((r) => ({ setRpm: r.setRpm, measuredRpm: r.measuredRpm }));
      const fit = fitRateCalibration(readings, item.rateTolerancePct ?? 1);
      return {
        ...empty,
        ...common,
        meterId: meter.id,
        readings: JSON.stringify(readings),
        slope: fit.slope,
        interceptRpm: fit.interceptRpm,
        slopeStdError: fit.slopeStdError,
        interceptStdErrorRpm: fit.interceptStdErrorRpm,
        slopeInterceptCovarianceRpm: fit.slopeInterceptCovarianceRpm,
        meanSetRateRpm: fit.meanSetRateRpm,
        residualSdRpm: fit.residualSdRpm,
        maxResidualRpm: fit.maxResidualRpm,
        maxDeviationRpm: fit.maxDeviationRpm,
        maxDeviationPct: fit.maxDeviationPct,
        tolerancePct: fit.tolerancePct,
        passed: fit.passed,
      };
    }
    if (input.kind === "scale") {
      const known = {
        knownLengthM: input.knownLengthMm! / 1000,
        knownLengthUncertaintyM: input.knownLengthUncertaintyMm! / 1000,
        lengthPx: input.lengthPx!,
        lengthUncertaintyPx: input.lengthUncertaintyPx!,
      };
      // The camera's scale tolerance is frozen into the record, as the table's rate tolerance is into a rate calibration.
      return { ...empty, ...common, ...known, ...scaleFromKnownLength(known), tolerancePct: item.scaleTolerancePct ?? DEFAULT_SCALE_TOLERANCE_PCT };
    }
    const timing = {
      nominalFrameRateFps: input.nominalFrameRateFps ?? item.nominalFrameRateFps ?? NaN,
      frameIntervals: input.frameIntervals!,
      frameIntervalsUncertainty: input.frameIntervalsUncertainty!,
      referenceElapsedS: input.referenceElapsedS!,
      referenceElapsedUncertaintyS: input.referenceElapsedUncertaintyS!,
    };
    return { ...empty, ...common, ...timing, ...frameRateFromTiming(timing) };
  } catch (err) {
    if (err instanceof CalibrationInputError) throw new CalibrationError(422, "invalid_calibration", err.message, err.field);
    throw err;
  }
}

export async function createCalibration(input: CalibrationInput, performer: Pick<CurrentUser, "id">) {
  const columns = await columnsFor(input);
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    const cal = await Calibration.create({ ...columns, performedById: performer.id, signedOffById: null, signedOffAt: null }, { transaction: t });
    await noteCalibrationChange(t, cal.id, performer.id, "created", null, calibrationKindLabels[input.kind]);
    return cal;
  });
}

/**
 * Changes a record that is not yet signed off. The check and the write share one transaction that
 * holds the record's row lock, so a sign-off (a conditional UPDATE of the same row) lands wholly
 * before the check or after the write, never in between.
 */
export async function updateCalibration(id: number, input: CalibrationInput, editor: Pick<CurrentUser, "id" | "role">) {
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    const cal = await Calibration.findByPk(id, locking(t));
    if (!cal) throw new CalibrationError(404, "not_found", "That calibration record does not exist.");
    if (!canEditCalibration(editor, cal)) throw new CalibrationError(403, "forbidden", NOT_YOURS_MESSAGE);
    if (cal.signedOffAt) throw new CalibrationError(409, "calibration_signed", SIGNED_MESSAGE);
    if (input.kind !== cal.kind || input.equipmentId !== cal.equipmentId) {
      throw new CalibrationError(422, "fixed_fields", "The kind and the equipment of a record cannot change; record a new calibration instead.");
    }
    const columns = await columnsFor(input, t);
    const edits = calibrationEdits(cal, columns, await getLabTimeZone(t));
    await cal.update(columns, { transaction: t });
    await noteCalibrationEdits(t, cal.id, editor.id, edits);
    return cal;
  });
}

/** Why this person may not sign this record off under the lab's rule, or null when they may. */
export function secondPersonRefusal(cal: Pick<Calibration, "performedById">, signer: Pick<CurrentUser, "id">, signOffBySecondPerson: boolean): string | null {
  if (!signOffBySecondPerson || cal.performedById !== signer.id) return null;
  return "You performed this calibration, and the lab requires a second person to sign it off: another lab manager must check and sign it.";
}

/**
 * A lab manager's sign-off: once, and from then on the record never changes. Under the lab's
 * second-person rule (on by default) the signer is not the person who performed the record.
 * The record is read with its row lock, so the checks and the write see the same row.
 */
export async function signOffCalibration(id: number, manager: Pick<CurrentUser, "id" | "role">) {
  if (manager.role !== "lab_manager") throw new CalibrationError(403, "forbidden", "Only a lab manager signs calibrations off.");
  const now = new Date();
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    const found = await Calibration.findByPk(id, locking(t));
    if (!found) throw new CalibrationError(404, "not_found", "That calibration record does not exist.");
    if (found.signedOffAt) throw new CalibrationError(409, "calibration_signed", "This record was already signed off.");
    const refusal = secondPersonRefusal(found, manager, (await getLabSettings(t)).signOffBySecondPerson);
    if (refusal) throw new CalibrationError(403, "second_person_required", refusal);
    const [count] = await Calibration.update(
      { signedOffById: manager.id, signedOffAt: now },
      { where: { id, signedOffAt: { [Op.is]: null } }, transaction: t },
    );
    if (count === 0) throw new CalibrationError(409, "calibration_signed", "This record was already signed off.");
    await noteCalibrationChange(t, id, manager.id, "signedOff", null, null);
    await found.reload({ transaction: t });
    return found;
  });
}

/** Inside a transaction the record stays locked until it ends, so it cannot be signed off meanwhile. */
export async function assertCalibrationEditable(id: number, editor: Pick<CurrentUser, "id" | "role">, t?: Transaction) {
  const cal = await Calibration.findByPk(id, t ? locking(t) : {});
  if (!cal) throw new CalibrationError(404, "not_found", "That calibration record does not exist.");
  if (!canEditCalibration(editor, cal)) throw new CalibrationError(403, "forbidden", NOT_YOURS_MESSAGE);
  if (cal.signedOffAt) throw new CalibrationError(409, "calibration_signed", SIGNED_MESSAGE);
  return cal;
}

export function getCalibration(id: number) {
  return Number.isInteger(id) && id > 0 ? Calibration.findByPk(id) : Promise.resolve(null);
}
