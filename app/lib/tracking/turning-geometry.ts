/**
 * Where a pixel of the turning part of a view goes as it turns, and which pixels take part: about
 * the centre in the image for a camera straight down (Decision 70), or rigidly in the plane of the
 * view correction for a tilted one, p ↦ H⁻¹ c + R(θ)(H p − c) (Decision 76).
 */
import type { Mat3 } from "../projective/matrix";

/**
 * The turning part of a view: centre and radius in crop px, rate in image radians per second.
 * With `rectify` (a camera not quite overhead, Decision 76) the centre and radius are in the
 * rectified plane's px and the turn is rigid there: a pixel p turns to H⁻¹ R(θ) H p.
 */
export interface TurnInView {
  cx: number;
  cy: number;
  /** Pixels within this distance of the centre turn; a turned pixel stays inside the crop. */
  r: number;
  rate: number;
  /** Crop px → the rectified plane's px (the view correction moved to the crop), and its inverse. */
  rectify?: { H: Mat3; Hinv: Mat3 } | null;
  /**
   * The tank's disc in the rectified plane (plane px) when the turning centre is not the marked
   * centre: only pixels inside it take part, and samples that show a point from outside it are left
   * out of its median (turning-median.ts).
   */
  bound?: { cx: number; cy: number; r: number } | null;
}

/** `out` = H·(x, y) in the plane's px; false where the point goes to infinity. */
export function toPlane(H: Mat3, x: number, y: number, out: Float64Array): boolean {
  const w = H[2][0] * x + H[2][1] * y + H[2][2];
  if (!(Math.abs(w) > 1e-12)) return false;
  out[0] = (H[0][0] * x + H[0][1] * y + H[0][2]) / w;
  out[1] = (H[1][0] * x + H[1][1] * y + H[1][2]) / w;
  return true;
}

/**
 * Where crop pixel (x, y) lands when what turns is turned by `angle` about the centre (image angle):
 * c + R(angle)(p − c), in the rectified plane when the view has one. Written into `out`; false
 * when the pixel lies outside the turning disc (`out` then holds the pixel itself).
 */
export function turnPoint(turn: TurnInView, angle: number, x: number, y: number, out: Float64Array, cos = Math.cos(angle), sin = Math.sin(angle)): boolean {
  const rect = turn.rectify;
  let px = x;
  let py = y;
  if (rect) {
    if (!toPlane(rect.H, x, y, out)) {
      out[0] = x;
      out[1] = y;
      return false;
    }
    px = out[0]!;
    py = out[1]!;
  }
  const dx = px - turn.cx;
  const dy = py - turn.cy;
  if (dx * dx + dy * dy > turn.r * turn.r) {
    out[0] = x;
    out[1] = y;
    return false;
  }
  const qx = turn.cx + cos * dx - sin * dy;
  const qy = turn.cy + sin * dx + cos * dy;
  if (!rect) {
    out[0] = qx;
    out[1] = qy;
    return true;
  }
  if (toPlane(rect.Hinv, qx, qy, out)) return true;
  out[0] = x;
  out[1] = y;
  return false;
}

/** Distance of crop pixel (x, y) from the turning centre, in the plane where the turn is rigid. */
export function turnDistance(turn: TurnInView, x: number, y: number, scratch = new Float64Array(2)): number {
  if (turn.rectify) {
    if (!toPlane(turn.rectify.H, x, y, scratch)) return Number.POSITIVE_INFINITY;
    return Math.hypot(scratch[0]! - turn.cx, scratch[1]! - turn.cy);
  }
  return Math.hypot(x - turn.cx, y - turn.cy);
}

/** The crop rows and columns the turning disc can cover (its bounding box, the rectified disc mapped back). */
export function discBox(turn: TurnInView, width: number, height: number): { row0: number; row1: number; col0: number; col1: number } {
  if (!turn.rectify) {
    return {
      row0: Math.max(0, Math.floor(turn.cy - turn.r)),
      row1: Math.min(height - 1, Math.ceil(turn.cy + turn.r)),
      col0: Math.max(0, Math.floor(turn.cx - turn.r)),
      col1: Math.min(width - 1, Math.ceil(turn.cx + turn.r)),
    };
  }
  let minX = Infinity;
  let maxX = -Infinity;
  let minY = Infinity;
  let maxY = -Infinity;
  const at = new Float64Array(2);
  const disc = turn.bound && turn.bound.r < turn.r ? turn.bound : turn;
  for (let k = 0; k < 64; k++) {
    const a = (2 * Math.PI * k) / 64;
    if (!toPlane(turn.rectify.Hinv, disc.cx + disc.r * Math.cos(a), disc.cy + disc.r * Math.sin(a), at)) continue;
    minX = Math.min(minX, at[0]!);
    maxX = Math.max(maxX, at[0]!);
    minY = Math.min(minY, at[1]!);
    maxY = Math.max(maxY, at[1]!);
  }
  // A margin for the chords between the 64 points.
  return {
    row0: Math.max(0, Math.floor(minY - 2)),
    row1: Math.min(height - 1, Math.ceil(maxY + 2)),
    col0: Math.max(0, Math.floor(minX - 2)),
    col1: Math.min(width - 1, Math.ceil(maxX + 2)),
  };
}

/** Whether crop pixel (x, y) lies in the turning disc. */
export function inTurningDisc(turn: TurnInView, x: number, y: number, scratch = new Float64Array(2)): boolean {
  if (!(turnDistance(turn, x, y, scratch) <= turn.r)) return false;
  const bound = turn.bound;
  return !bound || !turn.rectify || Math.hypot(scratch[0]! - bound.cx, scratch[1]! - bound.cy) <= bound.r;
}

/** Every crop pixel of the turning disc, ascending. */
export function discPixels(turn: TurnInView, width: number, height: number): Int32Array {
  const { row0, row1, col0, col1 } = discBox(turn, width, height);
  const inside: number[] = [];
  const scratch = new Float64Array(2);
  for (let row = row0; row <= row1; row++) {
    for (let col = col0; col <= col1; col++) if (inTurningDisc(turn, col, row, scratch)) inside.push(row * width + col);
  }
  return Int32Array.from(inside);
}
