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
    const fit = linearFit(
      pts.map((p) => p.t),
      angles,
    );
    return { omega: fit.slope, stdError: fit.slopeSE, turns, nPoints: pts.length, reason: null };
  } catch (error) {
    return none(`The rate could not be measured (${error instanceof Error ? error.message : String(error)}).`);
  }
}
