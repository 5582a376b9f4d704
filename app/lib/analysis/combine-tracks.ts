/**
 * Several tracks of one run measure the same f: combine them into one estimate and say whether they
 * agree with each other. The inverse-variance weighted mean with its standard error (Σw)^−½, the
 * χ² of the tracks about it and the Birge ratio R = √(χ²/(n − 1)) (Birge 1932, Phys. Rev. 40, 207).
 * When R > 1 the tracks scatter more than their errors allow and the combined standard error is
 * multiplied by R, as the Particle Data Group scales its averages (PDG Review of Particle Physics,
 * Introduction, "averaging procedures": S = [χ²/(N − 1)]^½, applied only when S > 1; from memory).
 * The PDG's refinement of leaving very imprecise measurements out of S is not applied: the tracks
 * of one run are few and seldom that unequal.
 */
import { chiSquaredUpperTail } from "./chi-squared";

/** Below this χ² upper-tail probability the tracks are taken to disagree with each other. */
export const CONSISTENCY_P = 0.05;
/**
 * Among tracks that disagree with each other, the one with the largest pull |f_i − f̄|/σ_i is
 * flagged when that pull exceeds this, and the test is made again without it, for as long as at
 * least three tracks are left (of two that disagree, neither can be blamed).
 */
export const PULL_LIMIT = 2;

export interface Measurement {
  value: number;
  stdError: number;
}

export interface Combination {
  /** tracks combined */
  n: number;
  /** inverse-variance weighted mean */
  mean: number;
  /** (Σ 1/σ_i²)^−½, before any scaling */
  stdError: number;
  chi2: number;
  dof: number;
  /** √(χ²/(n − 1)); null for a single measurement */
  birgeRatio: number | null;
  /** what the standard error was multiplied by: R when R > 1, else 1 */
  scale: number;
  /** stdError × scale */
  scaledStdError: number;
  /** P(χ² ≥ the observed value) for dof degrees of freedom; null for a single measurement */
  pValue: number | null;
  /** the χ² test at CONSISTENCY_P passes (always for one measurement) */
  consistent: boolean;
  /** (value_i − mean)/σ_i, in input order */
  pulls: number[];
  /** the tracks that disagree with the others beyond their errors (see PULL_LIMIT), in input order */
  flagged: boolean[];
  /** the tracks left after the flagged ones still disagree with each other */
  restConsistent: boolean;
}

const usable = (m: Measurement) => Number.isFinite(m.value) && Number.isFinite(m.stdError) && m.stdError > 0;

function weighted(measurements: readonly Measurement[]) {
  const weights = measurements.map((m) => 1 / m.stdError ** 2);
  const sumW = weights.reduce((a, b) => a + b, 0);
  const mean = measurements.reduce((s, m, i) => s + weights[i]! * m.value, 0) / sumW;
  const pulls = measurements.map((m) => (m.value - mean) / m.stdError);
  const chi2 = pulls.reduce((s, p) => s + p * p, 0);
  const dof = measurements.length - 1;
  const pValue = dof > 0 ? chiSquaredUpperTail(chi2, dof) : null;
  return { mean, stdError: 1 / Math.sqrt(sumW), pulls, chi2, dof, pValue, consistent: pValue === null || pValue >= CONSISTENCY_P };
}

/** Flags, one at a time, the track that pulls hardest while the rest disagree (see PULL_LIMIT). */
function outliers(measurements: readonly Measurement[]): { flagged: boolean[]; restConsistent: boolean } {
  const flagged = measurements.map(() => false);
  let rest = measurements.map((m, i) => ({ m, i }));
  for (;;) {
    const c = weighted(rest.map((r) => r.m));
    if (c.consistent || rest.length < 3) return { flagged, restConsistent: c.consistent };
    let worst = 0;
    c.pulls.forEach((p, k) => {
      if (Math.abs(p) > Math.abs(c.pulls[worst]!)) worst = k;
    });
    if (!(Math.abs(c.pulls[worst]!) > PULL_LIMIT)) return { flagged, restConsistent: false };
    flagged[rest[worst]!.i] = true;
    rest = rest.filter((_, k) => k !== worst);
  }
}

/** The combination of one or more measurements, each with a finite value and a positive standard error; null when there are none. */
export function combineMeasurements(measurements: readonly Measurement[]): Combination | null {
  if (!measurements.length || !measurements.every(usable)) return null;
  const { mean, stdError, pulls, chi2, dof, pValue, consistent } = weighted(measurements);
  const n = measurements.length;
  const birgeRatio = dof > 0 ? Math.sqrt(chi2 / dof) : null;
  const scale = birgeRatio !== null && birgeRatio > 1 ? birgeRatio : 1;
  return {
    n,
    mean,
    stdError,
    chi2,
    dof,
    birgeRatio,
    scale,
    scaledStdError: stdError * scale,
    pValue,
    consistent,
    pulls,
    ...outliers(measurements),
  };
}
