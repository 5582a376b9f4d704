/**
 * How well a stack was tracked: the share of frames with a detection, and centroid jitter — the
 * scatter of each track about a local quadratic in time (7 points), which smooth motion follows
 * closely and centroid noise does not.
 */
import { mean } from "simple-statistics";
import type { FrameDetections, Track, TrackPoint, TrackQuality, TrackingQuality } from "./types";
import { solveLinear } from "../linear-solve";

const window = 7;
const minWindow = 5;

/**
 * Sum of squared 2-D residuals and their count. Each residual is divided by √(1 − h), h the
 * point's leverage in its own fit, so the figure estimates the centroid noise itself rather than
 * the smaller scatter left after fitting.
 */
function residuals(points: readonly TrackPoint[]): { sum: number; count: number } {
  const n = points.length;
  let sum = 0;
  let count = 0;
  if (n < minWindow) return { sum, count };
  const size = Math.min(window, n);
  for (let i = 0; i < n; i++) {
    const start = Math.max(0, Math.min(n - size, i - (size >> 1)));
    const win = points.slice(start, start + size);
    const tMean = mean(win.map((p) => p.t));
    const span = Math.max(1e-9, Math.max(...win.map((p) => Math.abs(p.t - tMean))));
    const u = win.map((p) => (p.t - tMean) / span);
    const s: [number, number, number, number, number] = [0, 0, 0, 0, 0];
    for (const v of u) for (let k = 0; k < 5; k++) s[k]! += v ** k;
    const normal = () => [
      [s[0], s[1], s[2]],
      [s[1], s[2], s[3]],
      [s[2], s[3], s[4]],
    ];
    const ui = (points[i]!.t - tMean) / span;
    const row = [1, ui, ui * ui];
    const inverseRow = solveLinear(normal().flat(), row, 3);
    if (!inverseRow) continue;
    const leverage = row[0]! * inverseRow[0]! + row[1]! * inverseRow[1]! + row[2]! * inverseRow[2]!;
    if (leverage >= 1 - 1e-9) continue;
    let r2 = 0;
    for (const axis of ["x", "y"] as const) {
      const rhs: [number, number, number] = [0, 0, 0];
      win.forEach((p, j) => {
        rhs[0] += p[axis];
        rhs[1] += p[axis] * u[j]!;
        rhs[2] += p[axis] * u[j]! * u[j]!;
      });
      const c = solveLinear(normal().flat(), rhs, 3);
      if (!c) continue;
      const fitted = c[0]! + c[1]! * ui + c[2]! * ui * ui;
      r2 += (points[i]![axis] - fitted) ** 2;
    }
    sum += r2 / (1 - leverage);
    count++;
  }
  return { sum, count };
}

/** RMS 2-D centroid jitter of one track, px; null for tracks too short to tell. */
export function trackJitter(points: readonly TrackPoint[]): number | null {
  const { sum, count } = residuals(points);
  return count > 0 ? Math.sqrt(sum / count) : null;
}

export function trackingQuality(frameCount: number, frames: readonly FrameDetections[], tracks: readonly Track[], shortTracksDropped: number): TrackingQuality {
  const withDetection = frames.filter((f) => f.detections.length > 0).length;
  let sum = 0;
  let count = 0;
  const perTrack: TrackQuality[] = tracks.map((track) => {
    const first = track.points[0]!.frameIndex;
    const last = track.points[track.points.length - 1]!.frameIndex;
    const spanFrames = last - first + 1;
    const r = residuals(track.points);
    sum += r.sum;
    count += r.count;
    return {
      id: track.id,
      points: track.points.length,
      spanFrames,
      detectedShare: track.points.length / spanFrames,
      jitterPx: r.count > 0 ? Math.sqrt(r.sum / r.count) : null,
    };
  });
  const longest = tracks.reduce((m, t) => Math.max(m, t.points.length), 0);
  return {
    frames: frameCount,
    framesDetectedShare: frameCount > 0 ? withDetection / frameCount : 0,
    longestTrackShare: frameCount > 0 ? longest / frameCount : 0,
    jitterPx: count > 0 ? Math.sqrt(sum / count) : null,
    shortTracksDropped,
    tracks: perTrack,
  };
}
