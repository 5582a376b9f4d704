/**
 * The theory check: does a tracer's measured Coriolis deflection match f = 2Ω at the rate in
 * force? One function for the worker, the command line and the browser. It never throws: any
 * input it cannot judge honestly gives the verdict "inconclusive" with the reason in words.
 */
import { mean } from "simple-statistics";
import { fitCircle } from "./circle-fit";
import { fitCoriolis, inertialPeriodFromAngle, predictedRadius, turningRate } from "./coriolis-fit";
import type { TimedPoint, ViewGeometry } from "./frames";
import { invert, type Mat3 } from "../projective/matrix";
import { imageToTable, reRotate, rotatingFrameToImage, trackToRotatingFrame } from "./frames";
import { formatFixed, formatNumber } from "../number-format";
import { correctFrameTimes } from "../calibrations-applied";
import { chooseWindow, DEFAULT_POLY_ORDER, MIN_FRAMES_PER_PERIOD, minimumWindow, oddWindow, positionNoise, smoothTrack, typicalFrameInterval } from "./savgol";
import {
  DEFAULT_TOLERANCE,
  emptyResult,
  isFiniteNumber,
  type AccelerationFitPoint,
  type OmegaSource,
  type TheoryCheckCircle,
  type TheoryCheckInput,
  type TheoryCheckResult,
} from "./check-result";
import { judgeF, pct } from "./check-verdict";

export type { AccelerationFitPoint, OmegaSource, TheoryCheckCircle, TheoryCheckInput, TheoryCheckResult, TheoryVerdict } from "./check-result";
export { DEFAULT_TOLERANCE };

/** Shortest track worth judging, as a fraction of the inertial period. */
export const MIN_PERIOD_FRACTION = 0.25;
/**
 * Largest share of the measured velocities' mean square that may be tracking noise. Beyond it the
 * first-order propagation of the noise understates the spread of f: on 6000 simulated tracks of
 * 36–486 frames the 95 % interval covered the truth 93–97 % of the time below a share of 1/64,
 * 88–91 % up to 1/16 and 85 % above.
 */
export const MAX_VELOCITY_NOISE_SHARE = 1 / 32;
/** More than this fraction of unusable points means the track itself is in doubt. */
const MAX_LEFT_OUT_FRACTION = 0.2;

/** A stored correction read back: three rows of three finite numbers, invertible. */
function isHomography(m: unknown): boolean {
  return (
    Array.isArray(m) && m.length === 3 && m.every((row) => Array.isArray(row) && row.length === 3 && row.every(isFiniteNumber)) && invert(m as Mat3) !== null
  );
}

/** Spread of points along and across their main direction (principal axes). */
function principalSpread(points: readonly { x: number; y: number }[]): { major: number; minor: number } {
  const n = points.length;
  const mx = mean(points.map((p) => p.x));
  const my = mean(points.map((p) => p.y));
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (const p of points) {
    sxx += (p.x - mx) ** 2;
    syy += (p.y - my) ** 2;
    sxy += (p.x - mx) * (p.y - my);
  }
  sxx /= n;
  syy /= n;
  sxy /= n;
  const halfTrace = (sxx + syy) / 2;
  const d = Math.sqrt(((sxx - syy) / 2) ** 2 + sxy * sxy);
  return { major: Math.sqrt(Math.max(0, halfTrace + d)), minor: Math.sqrt(Math.max(0, halfTrace - d)) };
}

export function runTheoryCheck(input: TheoryCheckInput): TheoryCheckResult {
  try {
    return check(input);
  } catch (error) {
    // Every expected problem is caught by name below; this is the last guard of "never a crash".
    const message = error instanceof Error ? error.message : String(error);
    return emptyResult(input, `The check could not be computed (${message}).`);
  }
}

function check(input: TheoryCheckInput): TheoryCheckResult {
  const inconclusive = (reason: string, partial: Partial<TheoryCheckResult> = {}) => emptyResult(input, reason, partial);

  // Settings.
  const tolerance = input.settings?.tolerance ?? DEFAULT_TOLERANCE;
  if (!isFiniteNumber(tolerance) || tolerance <= 0 || tolerance >= 1) {
    return inconclusive("The tolerance setting is not a fraction between 0 and 1, so there is nothing to judge against.");
  }

  // Rate in force.
  const omegaSet = input.omegaSet;
  if (!isFiniteNumber(omegaSet)) return inconclusive("The set rate of the table is missing or not a number.");
  let omega = omegaSet;
  let omegaSE = 0;
  let omegaSource: OmegaSource = "set rate, uncalibrated";
  const cal = input.omegaCalibrated;
  if (cal) {
    omegaSource = "rate calibration";
    if (!isFiniteNumber(cal.value) || !isFiniteNumber(cal.stdError) || cal.stdError < 0) {
      return inconclusive("The rate calibration in force gives no usable rate (a value or its standard error is missing).");
    }
    if (cal.value !== 0 && omegaSet !== 0 && Math.sign(cal.value) !== Math.sign(omegaSet)) {
      return inconclusive(
        "The rate calibration in force turns the other way from the set rate: check the direction logged for the run and for the calibration.",
      );
    }
    omega = cal.value;
    omegaSE = cal.stdError;
  }
  if (omega === 0) {
    return inconclusive("The rate in force is zero: a table at rest gives no Coriolis deflection to check.");
  }
  const fPredicted = 2 * omega;
  const fPredictedStdError = 2 * omegaSE;
  const rate = {
    omega,
    omegaSource,
    fPredicted,
    fPredictedStdError,
    calibrationId: cal?.calibrationId ?? null,
    calibrationsApplied: Array.isArray(input.calibrationsApplied) ? input.calibrationsApplied : [],
  };

  // View setup.
  const setup = input.setup;
  if (!setup || !setup.centre || !isFiniteNumber(setup.centre.x) || !isFiniteNumber(setup.centre.y)) {
    return inconclusive("The view setup has no usable rotation centre.", rate);
  }
  if (setup.pxPerM !== null && (!isFiniteNumber(setup.pxPerM) || setup.pxPerM <= 0)) {
    return inconclusive("The view setup's scale is not a positive number of pixels per metre.", rate);
  }
  if (input.cameraMode !== "rotating" && input.cameraMode !== "lab") {
    return inconclusive("The camera mode is neither co-rotating nor lab-fixed.", rate);
  }
  if (input.t0 !== undefined && !isFiniteNumber(input.t0)) {
    return inconclusive("The reference time t₀ is not a number.", rate);
  }
  const timing = input.frameTimes;
  if (timing && (!isFiniteNumber(timing.factor) || timing.factor <= 0 || !isFiniteNumber(timing.relStdError) || timing.relStdError < 0)) {
    return inconclusive("The timing check in force gives no usable correction of the frame times (a factor or its uncertainty is missing).", rate);
  }
  const timeFactor = timing ? timing.factor : 1;
  if (setup.correction && !isHomography(setup.correction)) {
    return inconclusive("The view setup's tilt correction is not a usable 3 × 3 matrix of numbers.", rate);
  }
  const view: ViewGeometry = { centre: setup.centre, pxPerM: setup.pxPerM, mirrored: setup.mirrored === true, correction: setup.correction ?? null };
  const lengthUnit = view.pxPerM === null ? "px" : "m";
  const pxPerUnit = view.pxPerM ?? 1;

  // Points: keep those with a finite time and position, in time order, one per time.
  // The one place frame times are corrected: the camera's times, rescaled to the reference's.
  const raw: readonly TimedPoint[] = Array.isArray(input.points) ? (timing ? correctFrameTimes(input.points, timeFactor) : input.points) : [];
  const usable = raw
    .filter((p) => p && isFiniteNumber(p.t) && isFiniteNumber(p.x) && isFiniteNumber(p.y))
    .map((p) => ({ t: p.t, x: p.x, y: p.y }))
    .sort((a, b) => a.t - b.t);
  const points: TimedPoint[] = [];
  for (const p of usable) if (points.length === 0 || p.t > points[points.length - 1]!.t) points.push(p);
  const nLeftOut = raw.length - points.length;
  const counts = { nPoints: points.length, nLeftOut, lengthUnit } as const;
  if (raw.length === 0) return inconclusive("The track has no points.", { ...rate, ...counts });
  if (nLeftOut > MAX_LEFT_OUT_FRACTION * raw.length) {
    return inconclusive(
      `${nLeftOut} of the track's ${raw.length} points have no usable frame time or position (missing, not a number, or a repeated time): the track cannot be trusted as it is.`,
      { ...rate, ...counts },
    );
  }

  const inertialPeriod = Math.PI / Math.abs(omega);
  const t0 = input.t0 !== undefined ? input.t0 * timeFactor : (points[0]?.t ?? 0);
  const rotating = trackToRotatingFrame(points, view, input.cameraMode, omega, t0);
  const lab = input.cameraMode === "lab" ? points.map((p) => ({ t: p.t, ...imageToTable(p, view) })) : reRotate(rotating, omega, t0);
  const series0 = { rotating, lab, accelFit: [], angle: [], residuals: [] };
  const base = { ...rate, ...counts, series: series0 };

  const minPoints = 2 * minimumWindow(DEFAULT_POLY_ORDER) + 1;
  if (points.length < minPoints) {
    return inconclusive(`Only ${points.length} usable points: at least ${minPoints} are needed to smooth and differentiate the track.`, base);
  }
  const frameInterval = typicalFrameInterval(points.map((p) => p.t));
  const framesPerPeriod = inertialPeriod / frameInterval;
  if (!(framesPerPeriod >= MIN_FRAMES_PER_PERIOD)) {
    return inconclusive(
      `The frames are ${formatNumber(frameInterval, 3)} s apart, only ${formatNumber(framesPerPeriod, 2)} frames per inertial period of ${formatNumber(inertialPeriod, 3)} s: at least ${MIN_FRAMES_PER_PERIOD} are needed to follow the turning (film faster or run the table slower).`,
      base,
    );
  }
  const duration = points[points.length - 1]!.t - points[0]!.t;
  if (duration < MIN_PERIOD_FRACTION * inertialPeriod) {
    return inconclusive(
      `The track lasts ${formatNumber(duration, 3)} s, ${pct(duration / inertialPeriod, 2)} of an inertial period (${formatNumber(inertialPeriod, 3)} s): at least ${pct(MIN_PERIOD_FRACTION, 2)} is needed to see the turning.`,
      base,
    );
  }

  let window: number;
  const asked = input.settings?.window;
  if (asked !== undefined) {
    if (!isFiniteNumber(asked) || asked < minimumWindow(DEFAULT_POLY_ORDER)) {
      return inconclusive(`The window setting must be a number of frames of at least ${minimumWindow(DEFAULT_POLY_ORDER)}.`, base);
    }
    window = oddWindow(asked);
  } else {
    window = chooseWindow({ frameInterval, inertialPeriod, nPoints: points.length });
  }
  const settings = { window, polyOrder: DEFAULT_POLY_ORDER, tolerance };
  const withSettings = { ...base, settings };
  if (points.length < 2 * window + 1) {
    return inconclusive(`Only ${points.length} usable points for a smoothing window of ${window} frames: at least ${2 * window + 1} are needed.`, withSettings);
  }

  const samples = smoothTrack(rotating, { window, polyOrder: DEFAULT_POLY_ORDER, frameInterval });
  if (samples.length < window + 2) {
    return inconclusive(
      `Gaps in the track leave only ${samples.length} places where a full smoothing window fits: the track has too many missing frames.`,
      withSettings,
    );
  }

  // Degenerate geometry: a tracer that barely moves, or moves along a straight line, shows no
  // turning that could be told from tracking noise.
  const noise = positionNoise(rotating, samples);
  const noisePx = noise * pxPerUnit;
  const imageSpread = principalSpread(points);
  const rotSpread = principalSpread(rotating);
  const noiseFloor = 3 * Math.max(noise, 1e-9 * rotSpread.major);
  if (imageSpread.major <= 3 * Math.max(noisePx, 1e-9) || rotSpread.major <= noiseFloor) {
    return inconclusive(
      `The tracer barely moves (spread ${formatNumber(imageSpread.major, 3)} px against tracking noise of ${formatNumber(noisePx, 3)} px): there is no motion to check.`,
      withSettings,
    );
  }
  if (rotSpread.minor <= noiseFloor) {
    return inconclusive(
      `All points lie on a straight line in the rotating frame (within the tracking noise of ${formatNumber(noisePx, 3)} px): there is no turning to measure. A free tracer on a turning table follows a curved path; check that it was free to move and that the track is the tracer's.`,
      withSettings,
    );
  }

  const fit = fitCoriolis(samples, { centrifugal: input.flatTable ? omega * omega : 0, trackingNoise: noise });
  if (!fit || !isFiniteNumber(fit.f) || !isFiniteNumber(fit.fStdError)) {
    return inconclusive("The velocities and accelerations of the track fit no Coriolis model (the fit could not be solved).", withSettings);
  }
  if (!(fit.velocityNoiseShare <= MAX_VELOCITY_NOISE_SHARE)) {
    return inconclusive(
      `The track is too noisy for its speed: tracking noise of ${formatNumber(noisePx, 3)} px makes up ${pct(fit.velocityNoiseShare, 2)} of the measured velocities' spread (at most ${pct(MAX_VELOCITY_NOISE_SHARE, 2)} gives an uncertainty that can be trusted). A faster tracer, a longer track or steadier tracking (a brighter tracer, less image noise) would help.`,
      withSettings,
    );
  }
  const fMeasured = fit.f;
  // f ∝ 1/time: the timing check's relative uncertainty is f's, added in quadrature (JCGM 100:2008, GUM §5.1.6).
  const fStdErrorTiming = timing ? Math.abs(fMeasured) * timing.relStdError : null;
  const fStdError = Math.hypot(fit.fStdError, fStdErrorTiming ?? 0);

  // Plots and secondary estimates.
  const accelFit: AccelerationFitPoint[] = fit.rows.map((r) => ({
    t: r.t,
    u: r.u,
    v: r.v,
    coriolisX: r.ax + fit.drag * r.u,
    coriolisY: r.ay + fit.drag * r.v,
    ax: r.ax,
    ay: r.ay,
    axFitted: r.axFitted,
    ayFitted: r.ayFitted,
    axPredicted: fPredicted * r.v - fit.drag * r.u,
    ayPredicted: -fPredicted * r.u - fit.drag * r.v,
  }));
  const residuals = fit.rows.map((r) => ({ t: r.t, rx: r.ax - r.axFitted, ry: r.ay - r.ayFitted }));
  const angleFit = inertialPeriodFromAngle(samples);
  const turned = angleFit ? Math.abs(angleFit.angles[angleFit.angles.length - 1]!.angle - angleFit.angles[0]!.angle) : 0;
  let deflection: "right" | "left" | null = null;
  if (angleFit && turned >= 0.1) deflection = angleFit.rate < 0 ? "right" : "left";
  const periodFromAngle = angleFit && turned >= 0.1 ? angleFit.period : null;

  const circleFit = fitCircle(rotating);
  let circle: TheoryCheckCircle | null = null;
  if (circleFit) {
    const centreImage = rotatingFrameToImage({ x: circleFit.cx, y: circleFit.cy }, view, input.cameraMode, omega, t0);
    const about = turningRate(
      rotating.map((p) => p.t),
      rotating.map((p) => Math.atan2(p.y - circleFit.cy, p.x - circleFit.cx)),
    );
    circle = {
      cx: centreImage.x,
      cy: centreImage.y,
      radiusPx: circleFit.radius * pxPerUnit,
      radiusM: view.pxPerM === null ? null : circleFit.radius,
      period: about && isFiniteNumber(about.period) ? about.period : null,
      rmsResidualPx: circleFit.rmsResidual * pxPerUnit,
    };
  }
  const meanSpeed = mean(samples.map((p) => Math.hypot(p.u, p.v)));
  const predictedRadiusM = view.pxPerM === null ? null : predictedRadius(meanSpeed, fPredicted);

  const series = { rotating, lab, accelFit, angle: angleFit?.angles ?? [], residuals };
  const measured = {
    ...withSettings,
    fMeasured,
    fStdError,
    fStdErrorTiming,
    frameTimeFactor: timing ? timeFactor : null,
    drag: fit.drag,
    dragStdError: isFiniteNumber(fit.dragStdError) ? fit.dragStdError : null,
    ratio: fMeasured / fPredicted,
    deflection,
    circle,
    periodFromAngle,
    predictedRadiusM,
    series,
  };

  // The verdict.
  const notes: string[] = [];
  if (nLeftOut > 0) notes.push(`${nLeftOut} point${nLeftOut === 1 ? " was" : "s were"} left out for a missing or repeated frame time or position.`);
  if (isFiniteNumber(fit.dragStdError) && fit.drag < -2 * fit.dragStdError) {
    notes.push("The tracer speeds up along its path (negative drag): something other than the Coriolis force may be driving it.");
  }
  if (timing) {
    notes.push(
      `Frame times were multiplied by ${formatFixed(timeFactor, 5)} from the timing check in force${timing.calibrationId !== null && timing.calibrationId !== undefined ? ` (#${timing.calibrationId})` : ""}; its uncertainty is part of f measured's standard error.`,
    );
  }
  const judged = judgeF({
    fMeasured,
    fStdError,
    fPredicted,
    fPredictedStdError,
    omegaSource,
    tolerance,
    cameraMode: input.cameraMode,
    nPoints: points.length,
    periods: duration / inertialPeriod,
  });
  return { ...measured, ...judged, reason: [judged.reason, ...notes].join(" ") };
}
