import { describe, expect, it } from "vitest";
import { linkDetections, type LinkingOptions } from "./link";
import type { Detection, FrameDetections } from "./types";

const options: LinkingOptions = { maxStepPx: 10, maxGapFrames: 3, minTrackPoints: 5 };

function detection(x: number, y: number): Detection {
  return { x, y, area: 40, roundness: 0.9, intensity: 100 };
}

/** Frames at 30 fps holding the given points (null: nothing detected in that frame). */
function frames(...perFrame: (readonly [number, number] | null)[][]): FrameDetections[] {
  return perFrame.map((points, i) => ({
    frameIndex: i,
    t: i / 30,
    detections: points.filter((p): p is readonly [number, number] => p !== null).map(([x, y]) => detection(x, y)),
  }));
}

describe("linking detections into tracks", () => {
  it("keeps two crossing tracers on their own tracks", () => {
    // Two tracers on straight lines crossing at (100, 100); at the crossing they are 1.5 px apart,
    // closer to each other than to where they were a frame before.
    const a = (i: number) => [80 + 4 * i, 80 + 4 * i] as const;
    const b = (i: number) => [80 + 4 * i + 0.75, 120 - 4 * i] as const;
    const stack = frames(...Array.from({ length: 11 }, (_, i) => [b(i), a(i)]));
    const { tracks } = linkDetections(stack, options);
    expect(tracks).toHaveLength(2);
    for (const track of tracks) {
      const rising = track.points[0].y < 100;
      const line = rising ? a : b;
      track.points.forEach((p, i) => expect([p.x, p.y]).toEqual([...line(i)]));
    }
  });

  it("bridges a gap of two frames without a detection", () => {
    const path = (i: number) => [50 + 3 * i, 60 + 1 * i] as const;
    const stack = frames(...Array.from({ length: 12 }, (_, i) => (i === 5 || i === 6 ? [] : [path(i)])));
    const { tracks } = linkDetections(stack, options);
    expect(tracks).toHaveLength(1);
    expect(tracks[0].points.map((p) => p.frameIndex)).toEqual([0, 1, 2, 3, 4, 7, 8, 9, 10, 11]);
  });

  it("does not bridge more missing frames than allowed", () => {
    const path = (i: number) => [50 + 3 * i, 60] as const;
    const stack = frames(...Array.from({ length: 14 }, (_, i) => (i >= 5 && i <= 8 ? [] : [path(i)])));
    const { tracks } = linkDetections(stack, options);
    expect(tracks.map((t) => t.points.length)).toEqual([5, 5]);
  });

  it("does not link a far jump: a new track starts there", () => {
    const stack = frames(
      ...Array.from({ length: 12 }, (_, i) => [i < 6 ? ([50 + 2 * i, 50] as const) : ([200 + 2 * i, 150] as const)]),
    );
    const { tracks } = linkDetections(stack, options);
    expect(tracks).toHaveLength(2);
    expect(tracks[0].points.every((p) => p.x < 100)).toBe(true);
    expect(tracks[1].points.every((p) => p.x > 200)).toBe(true);
  });

  it("leaves out tracks shorter than the minimum and counts them", () => {
    // A steady tracer plus a glint that shows in three frames only.
    const stack = frames(...Array.from({ length: 10 }, (_, i) => [[20 + i, 20] as const, i < 3 ? ([150, 150] as const) : null]));
    const { tracks, shortTracksDropped } = linkDetections(stack, options);
    expect(tracks).toHaveLength(1);
    expect(tracks[0].id).toBe(1);
    expect(shortTracksDropped).toBe(1);
  });
});
