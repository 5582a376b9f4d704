/**
 * The Coriolis fit and the simple kinematics of an inertial circle.
 *
 * Model (inertial motion with linear drag on an f-plane; Cushman-Roisin & Beckers 2011,
 * Introduction to Geophysical Fluid Dynamics, 2nd ed., ch. 2, from memory): aₓ = f v − r u + c x, a_y = −f u − r v + c y, with c = Ω² on a flat table
 * (centrifugal term, known from the rate in force) and c = 0 on a free surface or paraboloid.
 */
import { leastSquares, linearFit } from "./regression";
import type { SmoothedSample } from "./savgol";
import { unwrapAngles } from "./angles";

export interface CoriolisFitOptions {
  /** Ω² (s⁻²) on a flat table, 0 otherwise. */
  centrifugal?: number;
  /** Divide out the smoothing filter's known gain at the track's own frequency (default true). */
  correctFilterGain?: boolean;
  /**
   * Tracking noise per axis (position unit) measured from the raw positions' scatter about the
   * smoothed track (savgol.positionNoise). Used for the errors-in-velocity correction and as a
   * floor under the noise read from the fit's residuals.
   */
  trackingNoise?: number;
}

export interface CoriolisFitRow {
  t: number;
  /** rotating-frame velocity */
  u: number;
  v: number;
  /** measured acceleration less the centrifugal term */
  ax: number;
  ay: number;
  /** acceleration of the fitted model */
  axFitted: number;
  ayFitted: number;
}

export interface CoriolisFit {
  /** s⁻¹, signed: positive turns the velocity clockwise (to the right) */
  f: number;
  fStdError: number;
  /** s⁻¹, linear drag rate r */
  drag: number;
  dragStdError: number;
  /** What the standard errors would be if the residuals were independent (they are not). */
  fStdErrorNaive: number;
  dragStdErrorNaive: number;
  residualSD: number;
  /** Tracking noise per axis implied by the fit's residuals (position unit). */
  positionNoise: number;
  /** Relative change of f made by the filter-gain correction (0 when none was made). */
  filterGainCorrection: number;
  /** Relative change of f made by the errors-in-velocity correction. */
  velocityNoiseCorrection: number;
  /** Share of the measured velocities' mean square that is tracking noise (the errors-in-velocity
   * inflation); where it is large the first-order uncertainty is no longer to be trusted. */
  velocityNoiseShare: number;
  r2: number;
  nSamples: number;
  rows: CoriolisFitRow[];
}

/**
 * Least-squares f and r from smoothed velocities and accelerations, both components stacked.
 *
 * Standard errors: smoothing makes neighbouring residuals share raw positions, so the textbook
 * s²(XᵀX)⁻¹ is wrong (with derivative filters it is even too large: their noise sits at high
 * frequencies that a/v at the inertial frequency barely sees). Instead the raw tracking noise,
 * taken as independent from frame to frame with one variance σ² per axis, is propagated exactly
 * through the smoothing weights and the fit (first order, errors in u, v included):
 * Var(β) = σ² (XᵀX)⁻¹ M (XᵀX)⁻¹ with M = Σₖ WₖWₖᵀ over raw points k. σ² is the larger of the
 * noise read from the fit's own residuals (eᵀe over its expectation per unit σ²), so motion the
 * model does not explain widens the interval rather than hiding, and the tracking noise given
 * by the caller, which is measured on many more degrees of freedom. A sandwich (Newey–West)
 * estimator was tried first and rejected: with a few windows per track its variance estimate was
 * often negative. Noisy velocities also bias |f| low (errors in variables); that bias is removed
 * below. The Monte Carlo test checks the resulting 95% intervals.
 */
export function fitCoriolis(samples: readonly SmoothedSample[], options: CoriolisFitOptions = {}): CoriolisFit | null {
  const c = options.centrifugal ?? 0;
  const n = samples.length;
  if (n < 3) return null;
  const design: number[][] = [];
  const target: number[] = [];
  for (const s of samples) {
    design.push([s.v, -s.u]);
    target.push(s.ax - c * s.x);
    design.push([-s.u, -s.v]);
    target.push(s.ay - c * s.y);
  }
  let fit;
  try {
    fit = leastSquares(design, target);
  } catch {
    return null;
  }
  const [f, drag] = fit.coefficients as [number, number];
  const B = fit.inverseNormal;

  // Residual noise of sample i from raw noise at point k: e_x = Σ Aₖnˣₖ − Fₖnʸₖ,
  // e_y = Σ Aₖnʸₖ + Fₖnˣₖ, with A = a₂ − c·a₀ + r·a₁ and F = f·a₁ (aₙ the smoothing weights).
  let first = Number.POSITIVE_INFINITY;
  let last = Number.NEGATIVE_INFINITY;
  for (const s of samples) {
    first = Math.min(first, s.weights.first);
    last = Math.max(last, s.weights.first + s.weights.position.length - 1);
  }
  const span = last - first + 1;
  const wx0 = new Float64Array(span);
  const wx1 = new Float64Array(span);
  const wy0 = new Float64Array(span);
  const wy1 = new Float64Array(span);
  let traceC = 0;
  for (const s of samples) {
    const { first: k0, position, velocity, acceleration } = s.weights;
    // Regressor rows of this sample: x-row (v, −u), y-row (−u, −v).
    const xr0 = s.v;
    const xr1 = -s.u;
    const yr0 = -s.u;
    const yr1 = -s.v;
    for (let k = 0; k < position.length; k++) {
      const A = acceleration[k]! - c * position[k]! + drag * velocity[k]!;
      const F = f * velocity[k]!;
      traceC += 2 * (A * A + F * F);
      const j = k0 + k - first;
      // Raw x noise enters e_x with A and e_y with F; raw y noise enters e_x with −F and e_y with A.
      wx0[j] = wx0[j]! + xr0 * A + yr0 * F;
      wx1[j] = wx1[j]! + xr1 * A + yr1 * F;
      wy0[j] = wy0[j]! - xr0 * F + yr0 * A;
      wy1[j] = wy1[j]! - xr1 * F + yr1 * A;
    }
  }
  let m00 = 0;
  let m01 = 0;
  let m11 = 0;
  for (let j = 0; j < span; j++) {
    m00 += wx0[j]! * wx0[j]! + wy0[j]! * wy0[j]!;
    m01 += wx0[j]! * wx1[j]! + wy0[j]! * wy1[j]!;
    m11 += wx1[j]! * wx1[j]! + wy1[j]! * wy1[j]!;
  }
  const b00 = B[0]![0]!;
  const b01 = B[0]![1]!;
  const b11 = B[1]![1]!;
  // tr(H C) = tr(B M): the part of the noise the fit itself absorbs.
  const traceHC = b00 * m00 + 2 * b01 * m01 + b11 * m11;
  const sigmaFit2 = fit.residualSumOfSquares / (traceC - traceHC);
  const tracking = options.trackingNoise;
  const sigmaTrack2 = tracking !== undefined && Number.isFinite(tracking) && tracking > 0 ? tracking * tracking : 0;
  // The larger of the two: the scatter of raw positions is the precise measure of white tracking
  // noise, the fit's residuals also see motion the model does not explain.
  const sigma2 = Math.max(sigmaFit2, sigmaTrack2);
  // B M B for symmetric 2×2 B and M.
  const p00 = b00 * m00 + b01 * m01;
  const p01 = b00 * m01 + b01 * m11;
  const p10 = b01 * m00 + b11 * m01;
  const p11 = b01 * m01 + b11 * m11;
  let var0 = sigma2 * (p00 * b00 + p01 * b01);
  let var1 = sigma2 * (p10 * b01 + p11 * b11);

  // Errors in the regressors: noisy velocities inflate XᵀX = S·I (S = Σ|w|², the two columns
  // are orthogonal by construction) by E[Σ|δw|²] = 2σ²Σ‖velocity weights‖², which biases |f| and
  // |r| low by that fraction. The corrected estimate divides by S − D instead of S.
  let speedSquares = 0;
  let velocityWeightSquares = 0;
  for (const s of samples) {
    speedSquares += s.u * s.u + s.v * s.v;
    for (const w of s.weights.velocity) velocityWeightSquares += w * w;
  }
  const noiseForVelocity2 = sigmaTrack2 > 0 ? sigmaTrack2 : sigmaFit2;
  const inflation = (2 * noiseForVelocity2 * velocityWeightSquares) / speedSquares;
  const eivScale = inflation > 0 && inflation < 0.5 ? 1 / (1 - inflation) : 1;
  let fOut = f * eivScale;
  let dragOut = drag * eivScale;
  var0 *= eivScale * eivScale;
  var1 *= eivScale * eivScale;
  const fAfterEiv = fOut;
  if (c === 0 && options.correctFilterGain !== false) {
    const corrected = correctForFilterGain(samples, fOut, dragOut);
    if (corrected) {
      fOut = corrected.f;
      dragOut = corrected.drag;
      var0 *= corrected.varianceScale;
      var1 *= corrected.varianceScale;
    }
  }

  const rows: CoriolisFitRow[] = samples.map((s, i) => ({
    t: s.t,
    u: s.u,
    v: s.v,
    ax: target[2 * i]!,
    ay: target[2 * i + 1]!,
    axFitted: fit.fitted[2 * i]!,
    ayFitted: fit.fitted[2 * i + 1]!,
  }));
  return {
    f: fOut,
    fStdError: var0 > 0 ? Math.sqrt(var0) : Number.NaN,
    drag: dragOut,
    dragStdError: var1 > 0 ? Math.sqrt(var1) : Number.NaN,
    fStdErrorNaive: fit.standardErrors[0]!,
    dragStdErrorNaive: fit.standardErrors[1]!,
    residualSD: fit.residualSD,
    positionNoise: sigma2 > 0 ? Math.sqrt(sigma2) : Number.NaN,
    filterGainCorrection: fAfterEiv !== 0 ? fOut / fAfterEiv - 1 : 0,
    velocityNoiseCorrection: eivScale - 1,
    velocityNoiseShare: inflation,
    r2: fit.r2,
    nSamples: n,
    rows,
  };
}

/**
 * The smoothing filter passes a mode e^{λt} with gains G₁(λ) on the velocity and G₂(λ) on the
 * acceleration that are slightly off 1 when the window spans a good part of a period, so the fit
 * returns μ = λ·R(λ) with R = G₂/(λG₁) rather than λ = −(r + i f). The gains are known from the
 * weights, so solve μ = λ·R(λ) for λ by fixed-point iteration. Exact for a free
 * tracer (one moving mode); on a flat table the modes sit near Ω rather than 2Ω, where the
 * bias is already negligible, so no correction is made there. Gains of windows with gaps differ
 * a little; they are averaged with weight |w|².
 */
function correctForFilterGain(samples: readonly SmoothedSample[], f: number, drag: number): { f: number; drag: number; varianceScale: number } | null {
  const muRe = -drag;
  const muIm = -f;
  let lamRe = muRe;
  let lamIm = muIm;
  let rRe = 1;
  let rIm = 0;
  for (let iter = 0; iter < 6; iter++) {
    let sumRe = 0;
    let sumIm = 0;
    let sumW = 0;
    // Evenly spaced windows share their weight arrays, so their gain is computed once.
    const gains = new Map<Float64Array, [number, number] | null>();
    for (const s of samples) {
      const { offsets, velocity, acceleration } = s.weights;
      let gain = gains.get(offsets);
      if (gain === undefined) {
        let g1Re = 0;
        let g1Im = 0;
        let g2Re = 0;
        let g2Im = 0;
        for (let k = 0; k < offsets.length; k++) {
          const tau = offsets[k]!;
          const mag = Math.exp(lamRe * tau);
          const cr = mag * Math.cos(lamIm * tau);
          const ci = mag * Math.sin(lamIm * tau);
          g1Re += velocity[k]! * cr;
          g1Im += velocity[k]! * ci;
          g2Re += acceleration[k]! * cr;
          g2Im += acceleration[k]! * ci;
        }
        // R = G₂ / (λ G₁)
        const dRe = lamRe * g1Re - lamIm * g1Im;
        const dIm = lamRe * g1Im + lamIm * g1Re;
        const dd = dRe * dRe + dIm * dIm;
        gain = dd > 0 ? [(g2Re * dRe + g2Im * dIm) / dd, (g2Im * dRe - g2Re * dIm) / dd] : null;
        gains.set(offsets, gain);
      }
      if (!gain) continue;
      const w = s.u * s.u + s.v * s.v;
      sumRe += w * gain[0];
      sumIm += w * gain[1];
      sumW += w;
    }
    if (!(sumW > 0)) return null;
    rRe = sumRe / sumW;
    rIm = sumIm / sumW;
    // λ = μ / R
    const rr = rRe * rRe + rIm * rIm;
    const nextRe = (muRe * rRe + muIm * rIm) / rr;
    const nextIm = (muIm * rRe - muRe * rIm) / rr;
    const step = Math.hypot(nextRe - lamRe, nextIm - lamIm);
    lamRe = nextRe;
    lamIm = nextIm;
    if (step <= 1e-12 * Math.hypot(lamRe, lamIm)) break;
  }
  if (!Number.isFinite(lamRe) || !Number.isFinite(lamIm)) return null;
  return { f: -lamIm, drag: -lamRe, varianceScale: 1 / (rRe * rRe + rIm * rIm) };
}

export interface TurningRate {
  /** rad/s, the slope of the unwrapped angle: positive counterclockwise */
  rate: number;
  rateSE: number;
  /** s, 2π/|rate| */
  period: number;
  angles: { t: number; angle: number; fitted: number }[];
}

/** Turning rate of a direction sampled at times t: the slope of its unwrapped angle. */
export function turningRate(t: readonly number[], angles: readonly number[]): TurningRate | null {
  if (t.length < 3 || t.length !== angles.length) return null;
  const unwrapped = unwrapAngles(angles);
  let fit;
  try {
    fit = linearFit(t, unwrapped);
  } catch {
    return null;
  }
  return {
    rate: fit.slope,
    rateSE: fit.slopeSE,
    period: (2 * Math.PI) / Math.abs(fit.slope),
    angles: t.map((ti, i) => ({ t: ti, angle: unwrapped[i]!, fitted: fit.intercept + fit.slope * ti })),
  };
}

/**
 * Inertial period from the velocity's direction: f > 0 turns the velocity clockwise, so
 * f = −(turning rate) and the period is 2π/|f|.
 */
export function inertialPeriodFromAngle(samples: readonly Pick<SmoothedSample, "t" | "u" | "v">[]): (TurningRate & { f: number }) | null {
  const rate = turningRate(
    samples.map((s) => s.t),
    samples.map((s) => Math.atan2(s.v, s.u)),
  );
  return rate && { ...rate, f: -rate.rate };
}

/** Radius of the inertial circle, |V|/|f| (same length unit as the speed). */
export function predictedRadius(speed: number, f: number): number {
  return Math.abs(speed) / Math.abs(f);
}

/**
 * Lateral deflection after a straight launch over a distance L along the initial heading:
 * exact R − √(R² − L²) with R = |V|/|f| (NaN once L exceeds R: the circle never gets that far
 * along the heading), and the short-distance form |f|L²/(2|V|).
 */
export function straightLaunchDeflection(distance: number, speed: number, f: number): { exact: number; shortDistance: number } {
  const r = predictedRadius(speed, f);
  const exact = distance <= r ? r - Math.sqrt(r * r - distance * distance) : Number.NaN;
  return { exact, shortDistance: (Math.abs(f) * distance * distance) / (2 * Math.abs(speed)) };
}

export type DeflectionSense = "right" | "left";

/**
 * Which way the motion is deflected, from the sign of the velocity's turning rate: turning
 * clockwise (negative rate, f > 0) is to the right of the motion. Null when the rate is zero or
 * not a number.
 */
export function deflectionSense(velocityTurningRate: number): DeflectionSense | null {
  if (!Number.isFinite(velocityTurningRate) || velocityTurningRate === 0) return null;
  return velocityTurningRate < 0 ? "right" : "left";
}
