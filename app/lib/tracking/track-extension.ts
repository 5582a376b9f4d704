/**
 * Tracks of a float carried on through frames where no blob placed it: a lamp's glare on the water
 * as bright as the float's face hides part of the disc, the part left is refused (float-centre.ts)
 * or too faint to threshold, and the track breaks for longer than the linker bridges.
 *
 * From each end of a track, frame after frame: the place is foreseen from the track's last three
 * points (a parabola through them in frame number, which follows a circle's bend within a
 * fraction of a pixel at a tenth of a turn a frame), and the float's disc, its radius and face
 * level measured on the track's own clear frames, is fitted to that frame near it (disc-fit.ts).
 * A fit is kept only when its own uncertainty is small, its residual is like the frame's noise
 * and its face is the face of the clear frames; the first refusal ends the extension on that
 * side. What is kept is a measured position with its uncertainty, never the foreseen one.
 */
import type { DiscFit } from "./disc-fit";
import { linkDetections, type LinkingOptions } from "./link";
import type { Detection, FrameDetections, Track, TrackPoint } from "./types";

export interface DiscRequest {
  /** Where to look, full-frame px. */
  x: number;
  y: number;
  radius: number;
  face: number;
  reach: number;
  fitRadius: boolean;
}

/** The disc fitted in frame `index` (full-frame px), or null. */
export type FitInFrame = (index: number, request: DiscRequest) => Promise<DiscFit | null>;

export interface ExtensionOptions {
  /** Frames in the stack. */
  frames: number;
  /** Farthest a fitted centre may be from the foreseen one, px. */
  reachPx: number;
}

/** The largest position uncertainty (1 σ, px) a fitted disc may have to be kept. */
export const maxFitSdPx = 0.1;
/**
 * The largest residual RMS as a multiple of the clear frames' own (their residual is not the
 * noise alone: the edge's profile, the float's shadow and JPEG's blocks add to it).
 */
const maxResidualRatio = 1.5;
/** How far the fitted face may be from the clear frames', grey levels. */
const faceTolerance = 30;
/** Clear frames of a track measured for the radius and face, from each end. */
const calibrationFrames = 3;
/** The fewest points a piece of a path needs to be carried on: its clear frames measured, a parabola through its last three. */
const extensionStartPoints = calibrationFrames;

/**
 * The pieces of paths to carry on: linked as `linking` says, but kept from `extensionStartPoints`
 * points and not yet joined across longer gaps (gap-closing.ts), so a piece too short to be a track
 * can grow into one and a gap is worked into from both sides. The result is linked again with
 * `linking` itself.
 */
export function piecesToExtend(frames: readonly FrameDetections[], linking: LinkingOptions): Track[] {
  return linkDetections(frames, { ...linking, minTrackPoints: Math.min(linking.minTrackPoints, extensionStartPoints), closeGapFrames: undefined }).tracks;
}
/**
 * Tracks carried on, longest first: each end costs a few decodes, and a stack cluttered with
 * short tracks should not pay that for all of them.
 */
export const maxExtendedTracks = 10;

export interface Extension {
  /** Fitted detections by frame index. */
  added: Map<number, Detection>;
  /** Fits tried and refused (each ends one side of one track). */
  refused: number;
}

function foresee(points: readonly TrackPoint[], frame: number): { x: number; y: number } {
  const n = points.length;
  if (n === 1) return { x: points[0]!.x, y: points[0]!.y };
  if (n === 2) {
    const [a, b] = points as [TrackPoint, TrackPoint];
    const s = (frame - a.frameIndex) / (b.frameIndex - a.frameIndex);
    return { x: a.x + s * (b.x - a.x), y: a.y + s * (b.y - a.y) };
  }
  // Lagrange's parabola through the three points, in frame number.
  const [p0, p1, p2] = points.slice(-3) as [TrackPoint, TrackPoint, TrackPoint];
  const t0 = p0.frameIndex;
  const t1 = p1.frameIndex;
  const t2 = p2.frameIndex;
  const l0 = ((frame - t1) * (frame - t2)) / ((t0 - t1) * (t0 - t2));
  const l1 = ((frame - t0) * (frame - t2)) / ((t1 - t0) * (t1 - t2));
  const l2 = ((frame - t0) * (frame - t1)) / ((t2 - t0) * (t2 - t1));
  return { x: l0 * p0.x + l1 * p1.x + l2 * p2.x, y: l0 * p0.y + l1 * p1.y + l2 * p2.y };
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const h = sorted.length >> 1;
  return sorted.length % 2 ? sorted[h]! : (sorted[h - 1]! + sorted[h]!) / 2;
}

/** The disc's radius and face level from a track's clear frames at one end, or null if none fits well. */
async function calibrate(points: readonly TrackPoint[], fit: FitInFrame): Promise<Calibration | null> {
  const radii: number[] = [];
  const faces: number[] = [];
  const residuals: number[] = [];
  for (const p of points) {
    const found = await fit(p.frameIndex, { x: p.x, y: p.y, radius: 8, face: 255, reach: 2, fitRadius: true });
    if (!found || Math.max(found.sdX, found.sdY) > maxFitSdPx || !(found.radius > 2)) continue;
    radii.push(found.radius);
    faces.push(found.face);
    residuals.push(found.residualRms);
  }
  if (radii.length === 0) return null;
  return { radius: median(radii), face: median(faces), residual: median(residuals) };
}

interface Calibration {
  radius: number;
  face: number;
  /** The clear frames' residual RMS, grey levels. */
  residual: number;
}

function acceptable(found: DiscFit | null, disc: Calibration): found is DiscFit {
  return (
    found !== null &&
    Math.max(found.sdX, found.sdY) <= maxFitSdPx &&
    found.residualRms <= maxResidualRatio * Math.max(disc.residual, found.noise) &&
    Math.abs(found.face - disc.face) <= faceTolerance
  );
}

/**
 * Fitted detections that carry `tracks` on at either end into frames none of them holds. Each
 * track is carried until a fit is refused, the stack ends or it reaches a frame another track
 * (or an earlier extension) already holds.
 */
export async function extendTracks(tracks: readonly Track[], fit: FitInFrame, options: ExtensionOptions): Promise<Extension> {
  const held = new Set<number>();
  for (const track of tracks) for (const p of track.points) held.add(p.frameIndex);
  const added = new Map<number, Detection>();
  let refused = 0;
  const longestFirst = [...tracks].sort((a, b) => b.points.length - a.points.length).slice(0, maxExtendedTracks);
  for (const track of longestFirst) {
    for (const direction of [1, -1] as const) {
      const ordered = direction === 1 ? track.points : [...track.points].reverse();
      const end = ordered[ordered.length - 1]!.frameIndex;
      const next = end + direction;
      if (next < 0 || next >= options.frames || held.has(next)) continue;
      const disc = await calibrate(ordered.slice(-calibrationFrames), fit);
      if (!disc) continue;
      const recent = ordered.slice(-3).map((p) => ({ ...p }));
      for (let frame = next; frame >= 0 && frame < options.frames && !held.has(frame); frame += direction) {
        const guess = foresee(recent, frame);
        const found = await fit(frame, { ...guess, radius: disc.radius, face: disc.face, reach: options.reachPx, fitRadius: false });
        if (!acceptable(found, disc)) {
          refused++;
          break;
        }
        held.add(frame);
        added.set(frame, {
          x: found.x,
          y: found.y,
          area: Math.round(Math.PI * disc.radius * disc.radius),
          roundness: 1,
          intensity: Math.max(0, Math.min(255, Math.round(found.contrast))),
          sdPx: Math.max(found.sdX, found.sdY),
        });
        recent.push({ t: 0, x: found.x, y: found.y, frameIndex: frame });
        recent.shift();
      }
    }
  }
  return { added, refused };
}

/** The frames' detections with the fitted ones added. */
export function withExtension(frames: readonly FrameDetections[], extension: Extension): FrameDetections[] {
  return frames.map((f) => {
    const d = extension.added.get(f.frameIndex);
    return d ? { ...f, detections: [...f.detections, d] } : f;
  });
}
