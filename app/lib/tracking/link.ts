/**
 * Detections to tracks: frame by frame, each live track is paired with at most one detection by
 * optimal assignment (Hungarian algorithm) on squared distance from where the track was heading,
 * within a gate. A track may miss a few frames; its gate grows with the frames missed. Pieces of one
 * path parted by a longer gap are then joined where each foresees the other (gap-closing.ts).
 */
import { munkres } from "munkres";
import { closeGaps } from "./gap-closing";
import type { FrameDetections, Track, TrackPoint } from "./types";

export interface LinkingOptions {
  /** Farthest a tracer may be from its predicted place after one frame, px. */
  maxStepPx: number;
  /** Missing frames a track may bridge. */
  maxGapFrames: number;
  /** Tracks with fewer points are left out. */
  minTrackPoints: number;
  /** Longer gaps, up to this many frames, are closed where the pieces on either side foresee each other (gap-closing.ts); none when absent. */
  closeGapFrames?: number;
}

export const defaultLinking: Omit<LinkingOptions, "maxStepPx"> = { maxGapFrames: 3, minTrackPoints: 5, closeGapFrames: 8 };

export interface LinkResult {
  tracks: Track[];
  shortTracksDropped: number;
}

interface LiveTrack {
  points: TrackPoint[];
  /** px per frame, from the last two points; null until there are two. */
  vx: number | null;
  vy: number;
}

/** Pairs beyond the gate get this cost: the assignment avoids them and they are then discarded. */
const forbidden = 1e9;

export function linkDetections(frames: readonly FrameDetections[], options: LinkingOptions): LinkResult {
  const { maxStepPx, maxGapFrames, minTrackPoints } = options;
  if (!(maxStepPx > 0) || maxGapFrames < 0 || minTrackPoints < 1) {
    throw new Error("Linking needs a positive step, a gap of zero or more frames and a minimum track length.");
  }
  const ordered = [...frames].sort((a, b) => a.frameIndex - b.frameIndex);
  let live: LiveTrack[] = [];
  const finished: LiveTrack[] = [];

  for (const frame of ordered) {
    const f = frame.frameIndex;
    const still: LiveTrack[] = [];
    for (const track of live) {
      if (f - track.points[track.points.length - 1]!.frameIndex > maxGapFrames + 1) finished.push(track);
      else still.push(track);
    }
    live = still;
    const detections = frame.detections;
    const taken = new Array<boolean>(detections.length).fill(false);

    if (live.length > 0 && detections.length > 0) {
      const costs = live.map((track) => {
        const last = track.points[track.points.length - 1]!;
        const gap = f - last.frameIndex;
        const px = track.vx === null ? last.x : last.x + track.vx * gap;
        const py = track.vx === null ? last.y : last.y + track.vy * gap;
        const gate = maxStepPx * gap;
        return detections.map((d) => {
          const d2 = (d.x - px) ** 2 + (d.y - py) ** 2;
          return d2 <= gate * gate ? d2 / (gate * gate) : forbidden;
        });
      });
      for (const [row, col] of munkres(costs)) {
        if (costs[row]![col]! >= forbidden) continue;
        const track = live[row]!;
        const last = track.points[track.points.length - 1]!;
        const d = detections[col]!;
        const gap = f - last.frameIndex;
        track.vx = (d.x - last.x) / gap;
        track.vy = (d.y - last.y) / gap;
        track.points.push({ t: frame.t, x: d.x, y: d.y, frameIndex: f });
        taken[col] = true;
      }
    }
    detections.forEach((d, i) => {
      if (!taken[i]) live.push({ points: [{ t: frame.t, x: d.x, y: d.y, frameIndex: f }], vx: null, vy: 0 });
    });
  }
  finished.push(...live);

  const pieces = finished.map((track) => track.points);
  const paths = options.closeGapFrames ? closeGaps(pieces, { maxGapFrames: options.closeGapFrames }) : pieces;
  const kept = paths.filter((points) => points.length >= minTrackPoints).sort((a, b) => a[0]!.frameIndex - b[0]!.frameIndex || a[0]!.x - b[0]!.x);
  return {
    tracks: kept.map((points, i) => ({ id: i + 1, points })),
    shortTracksDropped: paths.length - kept.length,
  };
}
