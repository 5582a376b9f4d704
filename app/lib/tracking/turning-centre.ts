/**
 * Where the turning part of a tilted view turns about (Decision 76).
 *
 * Seen by a camera not quite overhead, each horizontal plane of the tank turns rigidly about the
 * axis, but the planes lie at different depths and a tilted camera sees their axis points at
 * different places. In the water surface's rectified plane (the view correction, which the rim's
 * marks give) a plane at height z turns rigidly about a = (1 − k)·n, with n the camera's nadir
 * (the surface point under the camera, measured from the axis) and k = Hc/(Hc − z) for a camera Hc
 * above the surface: the image of a plane parallel to the surface is the surface's image scaled
 * about the nadir by k. The bottom seen through the water lies a little below the surface, a lamp
 * seen in it as far below it as the lamp is above, so their centres differ and neither is the
 * marked centre. Neither depth is known to the tracker, so the centre is found from the frames:
 * the samples' departures from the still model, turned back about a candidate centre, agree best
 * when it is the centre of what turns.
 */
import { bilinear } from "./turning-background";
import type { TurnInView } from "./turning-geometry";

/** Each sample's departure from the still model (sample − still), per pixel. */
export function departures(samples: readonly Uint8Array[], still: Uint8Array): Int16Array[] {
  return samples.map((sample) => {
    const out = new Int16Array(still.length);
    for (let p = 0; p < still.length; p++) out[p] = sample[p]! - still[p]!;
    return out;
  });
}

/** A departure further than this from its point's mean counts as this far (the float, a sample's noise spike). */
const capGrey = 30;
/** A point is judged only when at least this many samples see it turned back inside the tank. */
const minSamplesAtPoint = 5;

/**
 * How much the departures disagree when turned back about `centre` (plane px): the mean square
 * deviation (capped) of each grid point's turned-back departures from their mean. The grid covers
 * the plan's turning disc at `step` px; a sample whose turned-back place falls outside that disc is
 * left out at that point.
 */
export function turningSpread(
  deps: readonly Int16Array[],
  width: number,
  height: number,
  turn: TurnInView,
  angles: readonly number[],
  centre: { x: number; y: number },
  step: number,
): number {
  const rect = turn.rectify;
  const r2 = turn.r * turn.r;
  const cap2 = capGrey * capGrey;
  const n = deps.length;
  const cos = angles.map(Math.cos);
  const sin = angles.map(Math.sin);
  const values = new Float64Array(n);
  let sum = 0;
  let dof = 0;
  for (let qy = turn.cy - turn.r; qy <= turn.cy + turn.r; qy += step) {
    for (let qx = turn.cx - turn.r; qx <= turn.cx + turn.r; qx += step) {
      if ((qx - turn.cx) ** 2 + (qy - turn.cy) ** 2 > r2) continue;
      const dx = qx - centre.x;
      const dy = qy - centre.y;
      let count = 0;
      let mean = 0;
      for (let j = 0; j < n; j++) {
        // The point q as sample j shows it: turned by its angle about the candidate centre.
        const px = centre.x + cos[j]! * dx - sin[j]! * dy;
        const py = centre.y + sin[j]! * dx + cos[j]! * dy;
        if ((px - turn.cx) ** 2 + (py - turn.cy) ** 2 > r2) continue;
        let x = px;
        let y = py;
        if (rect) {
          const H = rect.Hinv;
          const w = H[2][0] * px + H[2][1] * py + H[2][2];
          x = (H[0][0] * px + H[0][1] * py + H[0][2]) / w;
          y = (H[1][0] * px + H[1][1] * py + H[1][2]) / w;
        }
        if (!(x >= 0 && y >= 0 && x <= width - 1 && y <= height - 1)) continue;
        const v = bilinear(deps[j]!, width, height, x, y);
        values[count++] = v;
        mean += v;
      }
      if (count < minSamplesAtPoint) continue;
      mean /= count;
      for (let k = 0; k < count; k++) sum += Math.min(cap2, (values[k]! - mean) ** 2);
      dof += count - 1;
    }
  }
  return dof > 0 ? sum / dof : Number.POSITIVE_INFINITY;
}

/** The search's passes: candidate spacing and reach about the best so far, and the grid's step (px). */
const passes = [
  { spacing: 8, gridStep: 8 },
  { spacing: 2, gridStep: 4 },
  { spacing: 0.5, gridStep: 4 },
] as const;

/**
 * The centre (plane px) about which the departures agree best, within `reachPx` of the plan's
 * centre, with its spread, and the spread about the plan's centre for comparison. A coarse grid
 * of candidates, then two finer ones about the best.
 */
export function findTurningCentre(
  deps: readonly Int16Array[],
  width: number,
  height: number,
  turn: TurnInView,
  angles: readonly number[],
  reachPx: number,
): { x: number; y: number; spread: number; spreadAtPlan: number } {
  const spreadAtPlan = turningSpread(deps, width, height, turn, angles, { x: turn.cx, y: turn.cy }, passes[0].gridStep);
  let best = { x: turn.cx, y: turn.cy, spread: spreadAtPlan };
  let reach = reachPx;
  for (const { spacing, gridStep } of passes) {
    const around = { x: best.x, y: best.y };
    best = { ...around, spread: turningSpread(deps, width, height, turn, angles, around, gridStep) };
    const steps = Math.floor(reach / spacing);
    for (let i = -steps; i <= steps; i++) {
      for (let k = -steps; k <= steps; k++) {
        if (i === 0 && k === 0) continue;
        const candidate = { x: around.x + k * spacing, y: around.y + i * spacing };
        if (Math.hypot(candidate.x - turn.cx, candidate.y - turn.cy) > reachPx) continue;
        const spread = turningSpread(deps, width, height, turn, angles, candidate, gridStep);
        if (spread < best.spread) best = { ...candidate, spread };
      }
    }
    reach = spacing;
  }
  return { ...best, spreadAtPlan };
}

/** How far from the marked centre the turning centre is looked for, as a share of the turning disc's radius. */
export const centreReachShare = 0.4;

/**
 * A tilted view's turning part about its own centre: the plan's turn (rectified, about the marked
 * centre) moved to where the samples' departures from the still model agree best, its radius
 * grown by as much so that it covers the plan's disc, which bounds the pixels that take part
 * (turning-median.ts leaves out what a sample shows from beyond it).
 */
export function recentredTurn(
  samples: readonly Uint8Array[],
  still: Uint8Array,
  width: number,
  height: number,
  turn: TurnInView,
  angles: readonly number[],
): TurnInView {
  const found = findTurningCentre(departures(samples, still), width, height, turn, angles, centreReachShare * turn.r);
  const r = turn.r + Math.hypot(found.x - turn.cx, found.y - turn.cy);
  return { ...turn, cx: found.x, cy: found.y, r, bound: { cx: turn.cx, cy: turn.cy, r: turn.r } };
}
