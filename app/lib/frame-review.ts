/**
 * Frame review, pure: which frames a track has a point in, the track so far at a frame, and the
 * frames where no track found the tracer, written as ranges a person reads ("3, 17–19").
 */

/** A track as the frame viewer draws it: points as [frame position, x px, y px], in frame order. */
export interface ReviewTrack {
  number: number;
  points: [frameIndex: number, x: number, y: number][];
}

/** For each of `frameCount` frames, the numbers of the tracks with a point in it. */
export function tracksPerFrame(frameCount: number, tracks: ReviewTrack[]): number[][] {
  const per: number[][] = Array.from({ length: frameCount }, () => []);
  for (const t of tracks) {
    for (const [i] of t.points) per[i]?.push(t.number);
  }
  return per;
}

/** Positions (0-based) of the frames in which no track has a point: the tracer was not found there. */
export function framesWithoutTracer(frameCount: number, tracks: ReviewTrack[]): number[] {
  return tracksPerFrame(frameCount, tracks).flatMap((numbers, i) => (numbers.length ? [] : [i]));
}

/** The part of a track up to and including frame `index`; empty before the track starts. */
export function trackSoFar(track: ReviewTrack, index: number): ReviewTrack["points"] {
  return track.points.filter(([i]) => i <= index);
}

/** The track's point in frame `index`, if it has one. */
export function pointAt(track: ReviewTrack, index: number): { x: number; y: number } | null {
  const p = track.points.find(([i]) => i === index);
  return p ? { x: p[1], y: p[2] } : null;
}

/** Sorted whole numbers as runs of consecutive values: [2, 3, 4, 9] → [[2, 4], [9, 9]]. */
export function toRanges(sorted: number[]): [number, number][] {
  const out: [number, number][] = [];
  for (const n of sorted) {
    const last = out[out.length - 1];
    if (last && n === last[1] + 1) last[1] = n;
    else out.push([n, n]);
  }
  return out;
}

/** 0-based positions as 1-based frame numbers in words: "3, 17–19". */
export function describeFrames(positions: number[]): string {
  return toRanges(positions)
    .map(([a, b]) => (a === b ? `${a + 1}` : `${a + 1}–${b + 1}`))
    .join(", ");
}

/** The next (step 1) or previous (step −1) position in `positions` after `from`, or null. */
export function nextIn(positions: number[], from: number, step: 1 | -1): number | null {
  if (step === 1) return positions.find((p) => p > from) ?? null;
  for (let k = positions.length - 1; k >= 0; k--) {
    const p = positions[k]!;
    if (p < from) return p;
  }
  return null;
}
