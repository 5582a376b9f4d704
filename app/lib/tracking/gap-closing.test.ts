import { describe, expect, it } from "vitest";
import { closeGaps, foreseeTurning } from "./gap-closing";
import { linkDetections, type LinkingOptions } from "./link";
import type { FrameDetections, TrackPoint } from "./types";

/** A float on an inertial circle as a co-rotating camera sees it: 45 px radius, 36° a frame (10 frames a turn). */
function circle(i: number, phase = 0, cx = 200, cy = 150): TrackPoint {
  const a = phase + (i * Math.PI) / 5;
  return { t: i / 10, frameIndex: i, x: cx + 45 * Math.cos(a), y: cy + 45 * Math.sin(a) };
}

function stackOf(paths: ((i: number) => TrackPoint | null)[], frames: number): FrameDetections[] {
  return Array.from({ length: frames }, (_, i) => ({
    frameIndex: i,
    t: i / 10,
    detections: paths
      .map((path) => path(i))
      .filter((p): p is TrackPoint => p !== null)
      .map((p) => ({ x: p.x, y: p.y, area: 300, roundness: 0.9, intensity: 200 })),
  }));
}

const linking: LinkingOptions = { maxStepPx: 30, maxGapFrames: 3, minTrackPoints: 5, closeGapFrames: 8 };

describe("a steady turn foreseen", () => {
  it("carries a circle on exactly, forwards and (read backwards) back", () => {
    const points = [0, 1, 2, 3].map((i) => circle(i));
    const ahead = foreseeTurning(points, 4.5);
    const truth = circle(7.5);
    expect(Math.hypot(ahead.x - truth.x, ahead.y - truth.y)).toBeLessThan(1e-9);
    const later = [10, 11, 12, 13].map((i) => circle(i));
    const back = foreseeTurning(
      later.reverse().map((p) => ({ ...p, frameIndex: -p.frameIndex })),
      3.5,
    );
    const before = circle(6.5);
    expect(Math.hypot(back.x - before.x, back.y - before.y)).toBeLessThan(1e-9);
  });
});

describe("gaps longer than the linker bridges", () => {
  it("join the pieces of one float's circle hidden for 6 frames into one track, placing nothing in the gap", () => {
    const hidden = (i: number) => i >= 8 && i <= 13;
    const stack = stackOf([(i) => (hidden(i) ? null : circle(i))], 30);
    const { tracks } = linkDetections(stack, linking);
    expect(tracks).toHaveLength(1);
    expect(tracks[0]!.points.map((p) => p.frameIndex)).toEqual(Array.from({ length: 30 }, (_, i) => i).filter((i) => !hidden(i)));
    // Without closing, the linker alone leaves two tracks.
    expect(linkDetections(stack, { ...linking, closeGapFrames: undefined }).tracks).toHaveLength(2);
  });

  it("are not closed across more frames than allowed", () => {
    const hidden = (i: number) => i >= 8 && i <= 16;
    const { tracks } = linkDetections(stackOf([(i) => (hidden(i) ? null : circle(i))], 30), linking);
    expect(tracks).toHaveLength(2);
  });

  it("do not join a piece to another tracer's that does not continue its path", () => {
    // The first float leaves view at frame 7; a second, on a circle 20 px across from it, shows from frame 14.
    const first = (i: number) => (i <= 7 ? circle(i) : null);
    const second = (i: number) => (i >= 14 ? circle(i, 0, 200, 170) : null);
    const { tracks } = linkDetections(stackOf([first, second], 30), linking);
    expect(tracks).toHaveLength(2);
  });

  it("are left open where two pieces could continue the same one", () => {
    const a = [0, 1, 2, 3, 4, 5].map((i) => circle(i));
    // Two pieces start after the gap, both on the circle's path within the gate (0.5 px apart).
    const b = [12, 13, 14, 15, 16].map((i) => circle(i));
    const c = [12, 13, 14, 15, 16].map((i) => ({ ...circle(i), x: circle(i).x + 0.5 }));
    const out = closeGaps([a, b, c], { maxGapFrames: 8 });
    expect(out.map((piece) => piece.length).sort()).toEqual([5, 5, 6]);
    // With one of them alone, it is joined.
    expect(closeGaps([a, b], { maxGapFrames: 8 }).map((piece) => piece.length)).toEqual([11]);
  });
});
