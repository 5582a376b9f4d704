/**
 * What the theory check takes and gives: its input, its result, and the empty (inconclusive) result
 * every refusal starts from. One track's check (./check) and the combination of a run's tracks
 * (./check-tracks) give the same shape.
 */
import type { CameraMode, TimedPoint, ViewGeometry } from "./frames";
import { DECISION_RULE } from "./decision";
import type { AppliedCalibration, FrameTimeCorrection } from "../calibrations-applied";
import { DEFAULT_POLY_ORDER } from "./savgol";

export type TheoryVerdict = "agrees" | "disagrees" | "inconclusive";
export type OmegaSource = "set rate, uncalibrated" | "rate calibration";

export interface TheoryCheckInput {
  /** Track in image px, t in s. Points without a finite time or position are left out. */
  points: readonly { t: number; x: number; y: number }[];
  setup: ViewGeometry;
  /** Set rate, signed rad/s (counterclockwise seen from above positive). */
  omegaSet: number;
  /** The table's rate calibration in force, when there is one: the true rate at this set rate. */
  omegaCalibrated?: { value: number; stdError: number; calibrationId?: number | string };
  cameraMode: CameraMode;
  /** s; time at which the lab and rotating frames coincide (default: the track's first time). */
  t0?: number;
  /** A flat (not paraboloidal) table: add the centrifugal term Ω²r to the model. */
  flatTable?: boolean;
  /**
   * The timing check in force: every point's time (and t₀) is multiplied by factor before
   * anything else, and relStdError·|f| joins f measured's standard error in quadrature.
   */
  frameTimes?: FrameTimeCorrection;
  /** What was done with each calibration in force, in words; carried into the result unchanged. */
  calibrationsApplied?: AppliedCalibration[];
  settings?: {
    /** Fraction of |f predicted| within which the measurement agrees (default 0.03). */
    tolerance?: number;
    /** Smoothing window in frames (odd); chosen from the frame rate and the rate when absent. */
    window?: number;
  };
}

export interface TheoryCheckCircle {
  /** Circle centre in image px, as seen at t₀. */
  cx: number;
  cy: number;
  radiusPx: number;
  /** null without a scale */
  radiusM: number | null;
  /** s, one revolution about the fitted centre */
  period: number | null;
  rmsResidualPx: number;
}

export interface AccelerationFitPoint {
  t: number;
  /** rotating-frame velocity (m/s, or px/s without a scale) */
  u: number;
  v: number;
  /** The Coriolis part of the acceleration, a + r·(u, v) (less Ω²r on a flat table): plotted
   * against the rotated velocity (v, −u) its slope is f. */
  coriolisX: number;
  coriolisY: number;
  /** measured acceleration less the centrifugal term */
  ax: number;
  ay: number;
  axFitted: number;
  ayFitted: number;
  /** what f predicted (with the fitted drag) gives */
  axPredicted: number;
  ayPredicted: number;
}

export interface TheoryCheckResult {
  /** rad/s, signed: the rate in force */
  omega: number | null;
  omegaSource: OmegaSource;
  calibrationId: number | string | null;
  /** s⁻¹, signed, 2Ω */
  fPredicted: number | null;
  fPredictedStdError: number | null;
  /** s⁻¹, signed */
  fMeasured: number | null;
  /** the fit's standard error and the timing check's, in quadrature */
  fStdError: number | null;
  /** s⁻¹, the timing check's part of fStdError; null without a timing correction */
  fStdErrorTiming: number | null;
  /** the factor frame times were multiplied by; null when none was applied */
  frameTimeFactor: number | null;
  /** the calibrations frozen on the run and what the check did with each */
  calibrationsApplied: AppliedCalibration[];
  /** s⁻¹ */
  drag: number | null;
  dragStdError: number | null;
  /** fMeasured / fPredicted */
  ratio: number | null;
  deflection: "right" | "left" | null;
  verdict: TheoryVerdict;
  reason: string;
  circle: TheoryCheckCircle | null;
  /** s, 2π/|turning rate of the velocity| */
  periodFromAngle: number | null;
  /** m, mean speed / |f predicted|; null without a scale */
  predictedRadiusM: number | null;
  /** points used */
  nPoints: number;
  /** points left out for want of a finite time or position, or for a repeated time */
  nLeftOut: number;
  /** unit of the series' lengths */
  lengthUnit: "m" | "px";
  settings: { window: number | null; polyOrder: number; tolerance: number };
  /** 95 % interval of (f measured − f predicted)/f predicted; null when nothing was measured */
  interval95: { low: number; high: number } | null;
  /** the decision rule in words */
  decisionRule: string;
  series: {
    rotating: TimedPoint[];
    lab: TimedPoint[];
    accelFit: AccelerationFitPoint[];
    angle: { t: number; angle: number; fitted: number }[];
    residuals: { t: number; rx: number; ry: number }[];
  };
}

export const DEFAULT_TOLERANCE = 0.03;

export const isFiniteNumber = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);

/** An inconclusive result with the reason in words, and whatever was measured before the check stopped. */
export function emptyResult(input: TheoryCheckInput, reason: string, partial: Partial<TheoryCheckResult> = {}): TheoryCheckResult {
  const tolerance = input?.settings?.tolerance;
  return {
    omega: null,
    omegaSource: input?.omegaCalibrated ? "rate calibration" : "set rate, uncalibrated",
    calibrationId: input?.omegaCalibrated?.calibrationId ?? null,
    fPredicted: null,
    fPredictedStdError: null,
    fMeasured: null,
    fStdError: null,
    fStdErrorTiming: null,
    frameTimeFactor: null,
    calibrationsApplied: Array.isArray(input?.calibrationsApplied) ? input.calibrationsApplied : [],
    drag: null,
    dragStdError: null,
    ratio: null,
    deflection: null,
    verdict: "inconclusive",
    reason,
    circle: null,
    periodFromAngle: null,
    predictedRadiusM: null,
    nPoints: 0,
    nLeftOut: 0,
    lengthUnit: input?.setup?.pxPerM === null || input?.setup?.pxPerM === undefined ? "px" : "m",
    settings: {
      window: null,
      polyOrder: DEFAULT_POLY_ORDER,
      tolerance: isFiniteNumber(tolerance) ? tolerance : DEFAULT_TOLERANCE,
    },
    interval95: null,
    decisionRule: DECISION_RULE,
    series: { rotating: [], lab: [], accelFit: [], angle: [], residuals: [] },
    ...partial,
  };
}
