/**
 * Where to search a frame first, once the tracers are being followed: a window around where each
 * one is heading, from frames already searched. The detector searches only the windows, and the
 * whole frame when a window comes back empty or a find sits near a window's edge (threshold.ts;
 * for dye once widening the search round it has not settled it), so a window never changes what is found in it, only what is not looked at: the rest of the
 * frame. A tracer that comes into view there is caught by the frames searched whole: every
 * `wholeSearchEvery`-th frame, and every frame after one of those found more than the windows did,
 * until the newcomer is followed too.
 *
 * Frames are searched several at a time, so the windows of frame i come from frames searched
 * `lag` frames before it (i − lag, and the two before that for speed and its change). Which
 * frames are searched whole and which windows a frame gets depend only on frame numbers and on
 * what was found in earlier frames, never on which frame happened to finish first, so a stack
 * tracked twice, or resumed part-way, is searched the same way.
 */
import type { SearchWindow } from "./threshold";
import type { Detection } from "./types";

/** Every this many frames the whole frame is searched, whatever the windows say. */
export const wholeSearchEvery = 8;
/** More tracers than this, and the windows would cover most of the frame anyway. */
const maxWindows = 8;
/** Slack for the centroid's own scatter and a tracer's change of shape, px. */
const slackPx = 4;

/** The frames the windows of a frame are worked out from; null where a frame is not known. */
export interface WindowSources {
  /** Frame target − lag, and the two frames before it. */
  recent: readonly [readonly Detection[] | null, readonly Detection[] | null, readonly Detection[] | null];
  /** The last frame at or before target − lag searched whole by rule (a multiple of `wholeSearchEvery`). */
  lastWhole: readonly Detection[] | null;
  /** Frames from target − lag to the target. */
  lag: number;
  /** Farthest a tracer moves in one frame, px (the linker's gate). */
  maxStepPx: number;
}

/** Whether frame `index` is searched whole by rule. */
export function searchedWhole(index: number): boolean {
  return index % wholeSearchEvery === 0;
}

/** The rule's last whole frame at or before `index`. */
export function lastWholeFrame(index: number): number {
  return index - (index % wholeSearchEvery);
}

function nearest(to: Detection, among: readonly Detection[], within: number): Detection | null {
  let best: Detection | null = null;
  let bestDistance = within;
  for (const d of among) {
    const distance = Math.hypot(d.x - to.x, d.y - to.y);
    if (distance <= bestDistance) {
      best = d;
      bestDistance = distance;
    }
  }
  return best;
}

/**
 * The windows for one frame, or null to search it whole: a tracer of frame target − lag without
 * a predecessor in each of the two frames before (it has just appeared, or flickers), a frame
 * with nothing found or too much, or a whole-frame search since then that found more tracers
 * than the windows follow.
 */
export function searchWindows(sources: WindowSources): SearchWindow[] | null {
  const [latest, before, earlier] = sources.recent;
  if (!latest || !before || !earlier || !sources.lastWhole) return null;
  if (latest.length === 0 || latest.length > maxWindows) return null;
  if (sources.lastWhole.length > latest.length) return null;
  const { lag, maxStepPx } = sources;
  const windows: SearchWindow[] = [];
  for (const d0 of latest) {
    const d1 = nearest(d0, before, maxStepPx);
    if (!d1) return null;
    const d2 = nearest({ ...d1, x: 2 * d1.x - d0.x, y: 2 * d1.y - d0.y }, earlier, maxStepPx);
    if (!d2) return null;
    const vx = d0.x - d1.x;
    const vy = d0.y - d1.y;
    // Straight on at the last speed; the change of speed, kept up over the lag, bounds the miss.
    const acceleration = Math.hypot(d0.x - 2 * d1.x + d2.x, d0.y - 2 * d1.y + d2.y);
    const miss = acceleration * lag * (lag + 1) + 0.1 * Math.hypot(vx, vy) * lag;
    // Twice the radius of the blob's area: its pixels, for a blob up to 4:1 long.
    const extent = 2 * Math.sqrt(Math.max(0, d0.area) / Math.PI);
    const reach = extent + miss + slackPx;
    if (!(reach < 4 * maxStepPx)) return null;
    windows.push({ x: d0.x + lag * vx, y: d0.y + lag * vy, reach });
  }
  return windows;
}
