/**
 * What the theory check does with each calibration frozen on a run, and the words that say so.
 * Pure: the server reads the records (app/.server/runs/applied-calibrations.ts) and hands them here.
 *
 * - Rate calibration: the set rate becomes the true rate with its standard error (f predicted).
 * - Timing check: frame times are rescaled by nominal/true frame rate, and the true rate's relative
 *   uncertainty is added to f measured's (see frameTimeCorrection).
 * - Scale calibration: gives pixels per metre when the view setup has none; a view setup whose
 *   scale differs from it by more than the record's tolerance is flagged, never silently replaced.
 */
import { formatFixed, formatNumber, formatWithError } from "./number-format";
import type { CalibrationKind } from "./calibrations";

/** A camera's scale tolerance when none is stated: view setups within 1 % of the calibration agree. */
export const DEFAULT_SCALE_TOLERANCE_PCT = 1;

/**
 * Nominal frame rates closer than this share are the same camera setting. A timing check made at
 * another setting says nothing certain about this one (a camera's 29.97 against 30 frames/s is a
 * property of the mode, not only of its clock), so it is not applied.
 */
const SAME_NOMINAL_RATE = 1e-3;

/** The rescaling of frame times the theory check applies, and the uncertainty it brings. */
export interface FrameTimeCorrection {
  /** true time = camera time × factor (factor = nominal/true frame rate) */
  factor: number;
  /** relative standard error of the factor, and so of f measured (u(true fps)/true fps) */
  relStdError: number;
  calibrationId: number | string | null;
}

/** applied: changed the check; not_used: in force but left aside (words say why); flagged: a warning. */
export type CalibrationUse = "applied" | "not_used" | "flagged" | "none";

export interface AppliedCalibration {
  kind: CalibrationKind;
  /** null when no record of this kind was in force */
  calibrationId: number | null;
  use: CalibrationUse;
  /** One sentence, e.g. "timing check #7: frame times × 0.98039 (…)". */
  text: string;
}

const finite = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);

export function noneInForce(kind: CalibrationKind): AppliedCalibration {
  const what: Record<CalibrationKind, string> = {
    rate: "no rate calibration in force: f predicted is from the set rate, uncalibrated",
    timing: "no timing check in force: frame times are used as the camera (or the typed frame rate) gave them",
    scale: "no scale calibration in force: lengths use the view setup's scale, or pixels without one",
  };
  return { kind, calibrationId: null, use: "none", text: what[kind] };
}

export function notUsed(kind: CalibrationKind, calibrationId: number, why: string): AppliedCalibration {
  const label = kind === "timing" ? "timing check" : `${kind} calibration`;
  return { kind, calibrationId, use: "not_used", text: `${label} #${calibrationId}: not used — ${why}` };
}

/** The rate calibration as the check used it: "set 10.00 rpm → 10.040 ± 0.012 rpm". */
export function describeRate(rate: { calibrationId: number; setRpm: number; trueRpm: number; stdErrorRpm: number }): AppliedCalibration {
  return {
    kind: "rate",
    calibrationId: rate.calibrationId,
    use: "applied",
    text: `rate calibration #${rate.calibrationId}: set ${formatFixed(rate.setRpm, 2)} rpm → ${formatWithError(rate.trueRpm, rate.stdErrorRpm, 2)} rpm (f predicted = 2Ω at the true rate, its standard error included)`,
  };
}

export interface TimingRecord {
  calibrationId: number;
  nominalFrameRateFps: number | null;
  trueFrameRateFps: number | null;
  trueFrameRateUncertaintyFps: number | null;
}

/**
 * Model: the camera's clock (or the frame rate typed for the run, which is the camera's nominal
 * rate) ticks at true/nominal times the reference's rate, so a frame stamped at time t was taken at
 * t × nominal/true. A clock 2 % fast (true = 1.02 × nominal) stretches every interval by 2 % and
 * makes the measured f 2 % low; the correction undoes that exactly.
 *
 * Uncertainty: f ∝ 1/time, so f's relative standard error from the timing check is the true frame
 * rate's relative standard error, added in quadrature to the fit's (JCGM 100:2008, GUM §5.1.6, for
 * a product of powers of independent inputs).
 */
export function frameTimeCorrection(record: TimingRecord, runFrameRateFps: number): { correction: FrameTimeCorrection | null; entry: AppliedCalibration } {
  const { calibrationId: id, nominalFrameRateFps: nominal, trueFrameRateFps: trueFps, trueFrameRateUncertaintyFps: u } = record;
  if (!finite(nominal) || !finite(trueFps) || !finite(u) || nominal <= 0 || trueFps <= 0 || u < 0) {
    return {
      correction: null,
      entry: notUsed("timing", id, "the record has no usable nominal and true frame rates; frame times are as the camera gave them."),
    };
  }
  if (!(runFrameRateFps > 0) || Math.abs(runFrameRateFps - nominal) > SAME_NOMINAL_RATE * nominal) {
    return {
      correction: null,
      entry: notUsed(
        "timing",
        id,
        `it timed the camera at ${formatNumber(nominal, 6)} frames/s nominal and this run was filmed at ${formatNumber(runFrameRateFps, 6)} frames/s; frame times are as the camera gave them.`,
      ),
    };
  }
  const factor = nominal / trueFps;
  const relStdError = u / trueFps;
  const deviation = 100 * (trueFps / nominal - 1);
  return {
    correction: { factor, relStdError, calibrationId: id },
    entry: {
      kind: "timing",
      calibrationId: id,
      use: "applied",
      text: `timing check #${id}: frame times × ${formatFixed(factor, 5)} (true frame rate ${formatWithError(trueFps, u)} frames/s against ${formatNumber(nominal, 6)} nominal, the camera's clock ${deviation >= 0 ? "fast" : "slow"} by ${formatNumber(Math.abs(deviation), 2)} %); its uncertainty adds ${formatNumber(100 * relStdError, 2)} % of f in quadrature to f measured's standard error`,
    },
  };
}

/** Rescales frame times by the timing check's factor; everything else about a point is kept (a malformed point stays as it was, for the check to leave out). */
export function correctFrameTimes<T extends { t: number }>(points: readonly T[], factor: number): T[] {
  return points.map((p) => (p && typeof p.t === "number" ? { ...p, t: p.t * factor } : p));
}

/** What the scale does and does not touch, said once in every scale entry. */
export const SCALE_EFFECT =
  "The scale sets lengths only (circle radius, speeds, predicted radius, the metres in the CSV): every term of the Coriolis fit, the centrifugal Ω²r on a flat table included, scales with length, so f and the verdict do not depend on it.";

export interface ScaleRecord {
  calibrationId: number;
  scalePxPerM: number | null;
  scaleUncertaintyPxPerM: number | null;
  /** null on records made before cameras had a scale tolerance */
  tolerancePct: number | null;
}

/**
 * The scale the check uses and what the scale calibration had to do with it: it fills in a view
 * setup without a scale; a view setup with one keeps it, flagged when it differs from the record by
 * more than the record's tolerance (relative to the calibration's scale).
 */
export function scaleInUse(
  setupPxPerM: number | null,
  record: ScaleRecord,
): { pxPerM: number | null; entry: AppliedCalibration; differencePct: number | null } {
  const id = record.calibrationId;
  const cal = record.scalePxPerM;
  if (!finite(cal) || cal <= 0) {
    return { pxPerM: setupPxPerM, differencePct: null, entry: notUsed("scale", id, `the record has no usable scale. ${SCALE_EFFECT}`) };
  }
  const u = finite(record.scaleUncertaintyPxPerM) ? record.scaleUncertaintyPxPerM : 0;
  const calText = u > 0 ? `${formatWithError(cal, u)} px/m` : `${formatNumber(cal, 5)} px/m`;
  if (setupPxPerM === null) {
    return {
      pxPerM: cal,
      differencePct: null,
      entry: {
        kind: "scale",
        calibrationId: id,
        use: "applied",
        text: `scale calibration #${id}: applied — the view setup has no scale, so lengths use the calibration's ${calText}. ${SCALE_EFFECT}`,
      },
    };
  }
  const stated = finite(record.tolerancePct) && record.tolerancePct > 0;
  const tolerance = stated ? (record.tolerancePct as number) : DEFAULT_SCALE_TOLERANCE_PCT;
  const toleranceText = stated ? `tolerance ${formatNumber(tolerance, 3)} %` : `tolerance ${formatNumber(tolerance, 3)} %, the default: the record states none`;
  const differencePct = (100 * (setupPxPerM - cal)) / cal;
  const setupText = `${formatNumber(setupPxPerM, 5)} px/m`;
  if (Math.abs(differencePct) <= tolerance) {
    return {
      pxPerM: setupPxPerM,
      differencePct,
      entry: notUsed(
        "scale",
        id,
        `the view setup's scale ${setupText} agrees with the calibration's ${calText} within ${formatNumber(Math.abs(differencePct), 2)} % (${toleranceText}). ${SCALE_EFFECT}`,
      ),
    };
  }
  return {
    pxPerM: setupPxPerM,
    differencePct,
    entry: {
      kind: "scale",
      calibrationId: id,
      use: "flagged",
      text: `scale calibration #${id}: flagged — the view setup's scale ${setupText} differs from the calibration's ${calText} by ${formatNumber(Math.abs(differencePct), 2)} % (${toleranceText}). The view setup's scale was kept: re-mark the scale on the setup page or check the camera's mount. ${SCALE_EFFECT}`,
    },
  };
}

/** The entries that need a person's attention, for a notice on the run page. */
export function flaggedCalibrations(entries: readonly AppliedCalibration[] | null | undefined): AppliedCalibration[] {
  return (entries ?? []).filter((e) => e.use === "flagged");
}
