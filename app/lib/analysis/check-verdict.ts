/**
 * The verdict on a measured f, in words: the decision rule (./decision) applied to f measured and
 * f predicted with their standard errors, and the reason a technician reads. One track's check and
 * the combination of a run's tracks both end here.
 */
import type { CameraMode } from "./frames";
import { DECISION_RULE, decide, Z95 } from "./decision";
import { formatFixed, formatNumber, formatWithError, percentRange } from "../number-format";
import type { OmegaSource, TheoryVerdict } from "./check-result";

export function pct(fraction: number, digits = 2): string {
  return `${formatNumber(100 * fraction, digits)}%`;
}

export interface JudgedF {
  verdict: TheoryVerdict;
  reason: string;
  ratio: number;
  interval95: { low: number; high: number };
  decisionRule: string;
}

/**
 * f measured against f predicted = 2Ω. `measuredWords` names the measurement in the reason
 * ("f measured", or the weighted mean of several tracks); `tracks` above one makes the advice
 * speak of tracks rather than one track and of no frame count.
 */
export function judgeF(input: {
  fMeasured: number;
  fStdError: number;
  fPredicted: number;
  fPredictedStdError: number;
  omegaSource: OmegaSource;
  tolerance: number;
  cameraMode: CameraMode;
  nPoints?: number;
  periods: number;
  measuredWords?: string;
  tracks?: number;
}): JudgedF {
  const { fMeasured, fStdError, fPredicted, fPredictedStdError, omegaSource, tolerance } = input;
  const omega = fPredicted / 2;
  const combinedSE = Math.sqrt(fStdError ** 2 + fPredictedStdError ** 2);
  const diff = fMeasured - fPredicted;
  const rateWords = omegaSource === "rate calibration" ? "the rate calibration in force" : "the set rate (uncalibrated)";
  const decimals = Math.min(12, Math.max(0, 1 - Math.floor(Math.log10(fStdError))));
  const predictedText = fPredictedStdError > 0 ? formatWithError(fPredicted, fPredictedStdError) : formatFixed(fPredicted, decimals);
  const numbers = `${input.measuredWords ?? "f measured"} ${formatWithError(fMeasured, fStdError)} s⁻¹, f predicted ${predictedText} s⁻¹ from ${rateWords}`;

  const expectedSense = fPredicted > 0 ? "right" : "left";
  const measuredSense = fMeasured > 0 ? "right" : "left";
  const decision = decide({
    d: diff / fPredicted,
    s: combinedSE / Math.abs(fPredicted),
    tolerance,
    wrongSense: measuredSense !== expectedSense && Math.abs(fMeasured) > Z95 * fStdError,
    nPoints: input.nPoints,
    periods: input.periods,
    tracks: input.tracks,
  });
  const interval95 = { low: decision.low, high: decision.high };
  let reason: string;
  const span = `the 95% interval of the difference (f measured − f predicted)/f predicted is ${percentRange(decision.low, decision.high)}`;
  const what = (input.tracks ?? 1) > 1 ? "the tracks" : "the track";
  if (decision.verdict === "disagrees" && measuredSense !== expectedSense) {
    reason = `${numbers}: the tracer is deflected to the ${measuredSense} of its motion, but a ${omega > 0 ? "counterclockwise" : "clockwise"} table deflects it to the ${expectedSense}. Check the view setup's mirror setting (a camera under the table or a mirrored image flips the sense) and the direction logged for the run.`;
  } else if (decision.verdict === "agrees") {
    reason = `${numbers}: they differ by ${pct(Math.abs(diff) / Math.abs(fPredicted))}, and ${span}, wholly within the ${pct(tolerance)} tolerance. The deflection is to the ${measuredSense} of the motion, as expected.`;
  } else if (decision.verdict === "disagrees") {
    reason = `${numbers}: they differ by ${pct(Math.abs(diff) / Math.abs(fPredicted))}, and ${span}, wholly outside the ${pct(tolerance)} tolerance. Check the rate in force${omegaSource === "set rate, uncalibrated" ? " (no rate calibration is in force)" : ""}, the frame times, ${input.cameraMode === "lab" ? "the rotation centre, " : ""}and that the tracer moved freely.`;
  } else {
    reason = `${numbers}: ${span}, which straddles the ${pct(tolerance)} tolerance, so ${what} cannot confirm or refute the theory (the uncertainty is ${pct(combinedSE / Math.abs(fPredicted))} of f). ${decision.advice}`;
  }
  return { verdict: decision.verdict, reason, ratio: fMeasured / fPredicted, interval95, decisionRule: DECISION_RULE };
}
