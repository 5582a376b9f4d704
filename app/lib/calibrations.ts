import { mean } from "simple-statistics";
import { linearFit } from "./analysis/regression";
import type { LabSettings } from "./settings";
import type { EquipmentKind } from "./equipment";

export const calibrationKinds = ["rate", "scale", "timing"] as const;
export type CalibrationKind = (typeof calibrationKinds)[number];

export const calibrationKindLabels: Record<CalibrationKind, string> = {
  rate: "Rate calibration",
  scale: "Scale calibration",
  timing: "Timing check",
};

/** Which equipment each kind applies to. */
export const calibrationKindFor: Record<CalibrationKind, EquipmentKind> = {
  rate: "table",
  scale: "camera",
  timing: "camera",
};

export function kindsForEquipment(kind: EquipmentKind): CalibrationKind[] {
  return calibrationKinds.filter((k) => calibrationKindFor[k] === kind);
}

export function intervalDaysFor(
  kind: CalibrationKind,
  settings: Pick<LabSettings, "rateCalibrationIntervalDays" | "scaleCalibrationIntervalDays" | "timingCheckIntervalDays">,
) {
  return kind === "rate" ? settings.rateCalibrationIntervalDays : kind === "scale" ? settings.scaleCalibrationIntervalDays : settings.timingCheckIntervalDays;
}

const DAY_MS = 86_400_000;

export function defaultDueAt(performedAt: Date, intervalDays: number): Date {
  return new Date(performedAt.getTime() + intervalDays * DAY_MS);
}

/** The input is wrong in a way the person can fix; the message says how. */
export class CalibrationInputError extends RangeError {
  constructor(
    message: string,
    readonly field?: string,
  ) {
    super(message);
  }
}

export interface RateReading {
  setRpm: number;
  measuredRpm: number;
}

export interface RateCalibrationFit {
  /** measured = slope·set + intercept */
  slope: number;
  interceptRpm: number;
  slopeStdError: number;
  interceptStdErrorRpm: number;
  /** cov(slope, intercept), rpm: needed to propagate the line's uncertainty at any set rate. */
  slopeInterceptCovarianceRpm: number;
  meanSetRateRpm: number;
  residualSdRpm: number;
  /** Largest |measured − fitted| */
  maxResidualRpm: number;
  /** Largest |measured − set|, and as a share of the set rate: the pass/fail criterion. */
  maxDeviationRpm: number;
  maxDeviationPct: number;
  tolerancePct: number;
  passed: boolean;
  r2: number;
}

export const MIN_RATE_READINGS = 3;

/**
 * Fits measured = a·set + b to a rate meter's readings with the project's checked least-squares
 * line (linearFit, verified against NIST StRD Norris). A reading passes when it lies within
 * tolerancePct of its set rate; the calibration passes when every reading does.
 */
export function fitRateCalibration(readings: readonly RateReading[], tolerancePct: number): RateCalibrationFit {
  if (readings.length < MIN_RATE_READINGS) {
    throw new CalibrationInputError(`A rate calibration needs readings at ${MIN_RATE_READINGS} or more set rates; ${readings.length} given.`, "readings");
  }
  readings.forEach((r, i) => {
    if (!Number.isFinite(r.setRpm) || !Number.isFinite(r.measuredRpm)) {
      throw new CalibrationInputError(`Reading ${i + 1}: both the set rate and the measured rate must be numbers.`, "readings");
    }
    // A zero (or negative) rate has no share to compare with the tolerance and says the table did not turn.
    if (r.setRpm <= 0 || r.measuredRpm <= 0) {
      throw new CalibrationInputError(`Reading ${i + 1}: rates must be more than zero rpm (a table at rest calibrates nothing).`, "readings");
    }
  });
  if (!(tolerancePct > 0)) throw new CalibrationInputError("The table's rate tolerance must be more than zero.");
  const set = readings.map((r) => r.setRpm);
  const measured = readings.map((r) => r.measuredRpm);
  if (new Set(set).size < 2) {
    throw new CalibrationInputError("The readings need at least two different set rates to fit a line.", "readings");
  }
  const fit = linearFit(set, measured);
  const meanSet = mean(set);
  // linearFit fits on centred x, where the slope and the centred intercept are uncorrelated;
  // intercept = b_c − slope·x̄, so cov(slope, intercept) = −x̄·var(slope).
  const covariance = -meanSet * fit.slopeSE * fit.slopeSE;
  let maxDeviationRpm = 0;
  let maxDeviationPct = 0;
  for (const r of readings) {
    const dev = Math.abs(r.measuredRpm - r.setRpm);
    maxDeviationRpm = Math.max(maxDeviationRpm, dev);
    maxDeviationPct = Math.max(maxDeviationPct, (100 * dev) / r.setRpm);
  }
  return {
    slope: fit.slope,
    interceptRpm: fit.intercept,
    slopeStdError: fit.slopeSE,
    interceptStdErrorRpm: fit.interceptSE,
    slopeInterceptCovarianceRpm: covariance,
    meanSetRateRpm: meanSet,
    residualSdRpm: fit.residualSD,
    maxResidualRpm: fit.maxAbsResidual,
    maxDeviationRpm,
    maxDeviationPct,
    tolerancePct,
    passed: maxDeviationPct <= tolerancePct,
    r2: fit.r2,
  };
}

export interface RateLine {
  slope: number;
  intercept: number;
  slopeStdError: number;
  interceptStdError: number;
  /** cov(slope, intercept) in rpm; when absent it is taken as 0 (only for lines fitted elsewhere). */
  slopeInterceptCovariance?: number;
}

/**
 * The table's true rate at a set rate from the rate calibration's line, with the standard error of
 * the line there: var = s²·var(a) + var(b) + 2s·cov(a, b). This is the uncertainty of the mean rate
 * (what a run's theory check needs), not of one meter reading, which would add the residual SD.
 */
export function trueRateFromCalibration(cal: RateLine, setRpm: number): { rpm: number; stdErrorRpm: number } {
  const cov = cal.slopeInterceptCovariance ?? 0;
  const variance = setRpm * setRpm * cal.slopeStdError ** 2 + cal.interceptStdError ** 2 + 2 * setRpm * cov;
  return { rpm: cal.slope * setRpm + cal.intercept, stdErrorRpm: Math.sqrt(Math.max(variance, 0)) };
}

export interface ScaleResult {
  scalePxPerM: number;
  scaleUncertaintyPxPerM: number;
}

/** Pixels per metre from a known length seen in the image; relative uncertainties add in quadrature. */
export function scaleFromKnownLength(input: {
  knownLengthM: number;
  knownLengthUncertaintyM: number;
  lengthPx: number;
  lengthUncertaintyPx: number;
}): ScaleResult {
  const { knownLengthM: L, knownLengthUncertaintyM: uL, lengthPx: P, lengthUncertaintyPx: uP } = input;
  if (!(L > 0)) throw new CalibrationInputError("The known length must be more than zero.", "knownLengthMm");
  if (!(P > 0)) throw new CalibrationInputError("The length in the image must be more than zero pixels.", "lengthPx");
  if (!(uL >= 0) || !(uP >= 0)) throw new CalibrationInputError("Uncertainties cannot be negative.");
  if (uL >= L) throw new CalibrationInputError("The uncertainty of the known length must be smaller than the length.", "knownLengthUncertaintyMm");
  if (uP >= P) throw new CalibrationInputError("The uncertainty in pixels must be smaller than the length in pixels.", "lengthUncertaintyPx");
  const scale = P / L;
  return { scalePxPerM: scale, scaleUncertaintyPxPerM: scale * Math.hypot(uP / P, uL / L) };
}

export interface TimingResult {
  trueFrameRateFps: number;
  trueFrameRateUncertaintyFps: number;
  frameRateDeviationPct: number;
}

/**
 * A camera's true frame rate from the frame intervals counted between two readings of a reference
 * (a clock or a rate meter filmed in view) over a known elapsed time.
 */
export function frameRateFromTiming(input: {
  nominalFrameRateFps: number;
  frameIntervals: number;
  frameIntervalsUncertainty: number;
  referenceElapsedS: number;
  referenceElapsedUncertaintyS: number;
}): TimingResult {
  const { nominalFrameRateFps: nominal, frameIntervals: n, frameIntervalsUncertainty: un, referenceElapsedS: t, referenceElapsedUncertaintyS: ut } = input;
  if (!(nominal > 0)) throw new CalibrationInputError("The nominal frame rate must be more than zero.", "nominalFrameRateFps");
  if (!(n > 0)) throw new CalibrationInputError("Count at least one frame interval.", "frameIntervals");
  if (!(t > 0)) throw new CalibrationInputError("The elapsed time by the reference must be more than zero.", "referenceElapsedS");
  if (!(un >= 0) || !(ut >= 0)) throw new CalibrationInputError("Uncertainties cannot be negative.");
  const fps = n / t;
  return {
    trueFrameRateFps: fps,
    trueFrameRateUncertaintyFps: fps * Math.hypot(un / n, ut / t),
    frameRateDeviationPct: (100 * (fps - nominal)) / nominal,
  };
}

/** Where a record stands at a moment, in the words the pages use. */
export type CalibrationStanding = "draft" | "in_force" | "superseded" | "past_due";

export const standingLabels: Record<CalibrationStanding, string> = {
  draft: "Awaiting sign-off",
  in_force: "In force",
  superseded: "Superseded",
  past_due: "Past due",
};
