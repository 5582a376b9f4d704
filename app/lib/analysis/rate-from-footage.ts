/**
 * The table's rate read from the footage itself, with its standard error: the slope of an
 * unwrapped angle against time.
 */
import type { TimedPoint, ViewGeometry } from "./frames";
import { imageToTable } from "./frames";
import { formatNumber } from "../number-format";
import { linearFit } from "./regression";
import { unwrapAngles } from "./angles";

const isFiniteNumber = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);

/**
 * An angle's rate: the straight-line slope against time, with a standard error that allows for
 * errors correlated from frame to frame (a mark crossing the same compression blocks, slow
 * lighting changes): the lag-1 autocorrelation r₁ of the residuals gives an effective number of
 * points n(1 − r₁)/(1 + r₁), and the slope's variance is scaled by (n − 2)/(n_eff − 2)
 * (Santer et al. 2000, J. Geophys. Res. 105, 7337, eq. 6). Null when the errors are so
 * correlated that fewer than 3 effective points remain.
 */
export function rateFit(times: readonly number[], angles: readonly number[]): { slope: number; stdError: number; lag1: number } | null {
  const fit = linearFit(times, angles);
  const residuals = times.map((t, i) => angles[i]! - (fit.intercept + fit.slope * t));
  let num = 0;
  let den = 0;
  for (let i = 0; i < residuals.length; i++) {
    den += residuals[i]! ** 2;
    if (i > 0) num += residuals[i]! * residuals[i - 1]!;
  }
  const lag1 = den > 0 ? num / den : 0;
  const n = residuals.length;
  const nEff = lag1 > 0 ? (n * (1 - lag1)) / (1 + lag1) : n;
  if (!(nEff > 3)) return null;
  return { slope: fit.slope, stdError: fit.slopeSE * Math.sqrt((n - 2) / (nEff - 2)), lag1 };
}

export interface OmegaFromMark {
  /** rad/s, signed (counterclockwise seen from above positive) */
  omega: number | null;
  stdError: number | null;
  /** revolutions the mark made over the track */
  turns: number;
  nPoints: number;
  /** why there is no value, in words; null when there is one */
  reason: string | null;
}

/**
 * Ω measured from the video itself: with a lab-fixed camera, a mark fixed to the table turns
 * about the rotation centre at Ω. Slope of its unwrapped angle against time. The standard error
 * assumes independent tracking errors from frame to frame; a misplaced centre adds an error that
 * averages out over whole turns only, so prefer tracks of one turn or more.
 */
export function measureOmegaFromMark(
  points: readonly { t: number; x: number; y: number }[],
  centre: { x: number; y: number },
  options: { mirrored?: boolean } = {},
): OmegaFromMark {
  const none = (reason: string, nPoints = 0, turns = 0): OmegaFromMark => ({ omega: null, stdError: null, turns, nPoints, reason });
  try {
    if (!centre || !isFiniteNumber(centre.x) || !isFiniteNumber(centre.y)) return none("The rotation centre is missing or not a number.");
    const view: ViewGeometry = { centre, pxPerM: null, mirrored: options.mirrored === true };
    const usable = (Array.isArray(points) ? (points as readonly TimedPoint[]) : [])
      .filter((p) => p && isFiniteNumber(p.t) && isFiniteNumber(p.x) && isFiniteNumber(p.y))
      .sort((a, b) => a.t - b.t);
    const pts: TimedPoint[] = [];
    for (const p of usable) if (pts.length === 0 || p.t > pts[pts.length - 1]!.t) pts.push({ t: p.t, x: p.x, y: p.y });
    if (pts.length < 5) return none(`Only ${pts.length} usable points on the mark: at least 5 are needed.`, pts.length);
    const table = pts.map((p) => imageToTable(p, view));
    const radii = table.map((p) => Math.hypot(p.x, p.y));
    const minRadius = Math.min(...radii);
    if (!(minRadius >= 2)) {
      return none("The mark passes within 2 px of the rotation centre, where its angle cannot be read.", pts.length);
    }
    const angles = unwrapAngles(table.map((p) => Math.atan2(p.y, p.x)));
    const turns = (angles[angles.length - 1]! - angles[0]!) / (2 * Math.PI);
    if (Math.abs(turns) < 0.05) {
      return none(`The mark turns only ${formatNumber(Math.abs(turns) * 360, 2)}° over the track: too little to measure the rate.`, pts.length, turns);
    }
    const fit = rateFit(
      pts.map((p) => p.t),
      angles,
    );
    if (!fit) return none("The mark's positions wander together from frame to frame too much to give the rate an honest error.", pts.length, turns);
    return { omega: fit.slope, stdError: fit.stdError, turns, nPoints: pts.length, reason: null };
  } catch (error) {
    return none(`The rate could not be measured (${error instanceof Error ? error.message : String(error)}).`);
  }
}
