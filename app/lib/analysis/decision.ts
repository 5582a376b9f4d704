/**
 * The theory check's decision rule, with stated error rates. d = (f measured − f predicted)/
 * f predicted, s its combined standard error, τ the tolerance. The verdict is "agrees" only when
 * the whole 95 % interval d ± 1.96 s lies within ±τ, so a truth outside ±τ is called agreeing at
 * most 2.5 % of the time (when s is honest); "disagrees" only when the interval lies wholly
 * outside ±τ, so a truth inside ±τ is called disagreeing at most 2.5 % of the time; otherwise
 * "inconclusive", with how much smaller s would have to be to decide.
 */
import type { TheoryVerdict } from "./check-result";
import { formatNumber } from "../number-format";

/** Two-sided 95 % normal quantile. */
export const Z95 = 1.959963984540054;

export const DECISION_RULE =
  "d = (f measured − f predicted)/f predicted with combined standard error s (the fit, the timing check when one is applied, and the rate calibration): agrees only when d ± 1.96 s lies wholly within ± the tolerance, disagrees only when it lies wholly outside (or the tracer is deflected the wrong way), otherwise inconclusive.";

/**
 * How s falls with the number of frames N at a fixed frame rate and noise, measured on
 * simulated inertial circles at 30 fps with 0.2 px noise (median of 40 tracks): N^−1.8 to N^−2.7
 * between 36 and 120 frames (shorter than an inertial period), N^−1.1 beyond. The advice uses the
 * smaller exponents 1.5 and 1, so it errs towards too long a track rather than too short.
 */
const LENGTH_EXPONENT_SHORT = 1.5;
const LENGTH_EXPONENT_LONG = 1;

export interface Decision {
  verdict: TheoryVerdict;
  low: number;
  high: number;
  /** for an inconclusive verdict: how much longer or steadier a track would decide it */
  advice: string;
}

/** The decision rule on the relative difference d with its combined standard error s. */
export function decide(input: {
  d: number;
  s: number;
  tolerance: number;
  wrongSense?: boolean;
  nPoints?: number;
  periods?: number;
  /** several tracks combined: the advice speaks of each track, without a frame count */
  tracks?: number;
}): Decision {
  const { d, s, tolerance } = input;
  const low = d - Z95 * s;
  const high = d + Z95 * s;
  if (input.wrongSense) return { verdict: "disagrees", low, high, advice: "" };
  if (low >= -tolerance && high <= tolerance) return { verdict: "agrees", low, high, advice: "" };
  if (low > tolerance || high < -tolerance) return { verdict: "disagrees", low, high, advice: "" };
  // The standard error that would decide it: inside, the interval must shrink to fit within the
  // band; outside, to clear it. Right at the edge no finite track decides.
  const gap = Math.abs(tolerance - Math.abs(d));
  const needed = gap / Z95;
  if (!(needed > 0) || !(s > 0)) {
    return { verdict: "inconclusive", low, high, advice: "The measured difference sits right at the tolerance: no longer track would decide it." };
  }
  const factor = s / needed;
  const periods = input.periods ?? Number.NaN;
  const p = periods < 1 ? LENGTH_EXPONENT_SHORT : LENGTH_EXPONENT_LONG;
  const lengthFactor = factor ** (1 / p);
  const several = (input.tracks ?? 1) > 1;
  const n = several ? undefined : input.nPoints;
  const framesText = n !== undefined ? ` (about ${Math.ceil(n * lengthFactor)} frames instead of ${n})` : "";
  const longer = several ? `tracks each about ${formatNumber(lengthFactor, 3)}× longer` : `a track about ${formatNumber(lengthFactor, 3)}× longer`;
  return {
    verdict: "inconclusive",
    low,
    high,
    advice: `The standard error would have to be ${formatNumber(factor, 3)}× smaller to decide: ${longer} at the same frame rate${framesText}, or tracking noise ${formatNumber(factor, 3)}× smaller, should do it.`,
  };
}
