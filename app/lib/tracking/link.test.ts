import { createRequire } from "node:module";
import { describe, expect, it } from "vitest";
import { backgroundSampleIndices, medianBackground } from "./background";
import { createDetector } from "./detect";
import { cropForPlan } from "./plan-crop";
import { linkDetections, type LinkingOptions } from "./link";
import type { OpenCv } from "./opencv-types";
import { planDetection } from "./plan";
import { createSyntheticRenderer, type SyntheticRunSpec } from "./synthetic";
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
    // Two tracers on straight lines crossing at (100, 100). In the crossing frame each centroid
    // falls 0.8 px short of the crossing, so going by distance alone the tracks would swap
    // (bounce); going by where each was heading they do not.
    const a = (i: number) => [80 + 4 * i, i === 5 ? 99.2 : 80 + 4 * i] as const;
    const b = (i: number) => [80 + 4 * i, i === 5 ? 100.8 : 120 - 4 * i] as const;
    const stack = frames(...Array.from({ length: 11 }, (_, i) => [b(i), a(i)]));
    const { tracks } = linkDetections(stack, options);
    expect(tracks).toHaveLength(2);
    for (const track of tracks) {
      const rising = track.points[0]!.y < 100;
      const line = rising ? a : b;
      track.points.forEach((p, i) => expect([p.x, p.y]).toEqual([...line(i)]));
    }
  });

  it("bridges a gap of two frames without a detection", () => {
    const path = (i: number) => [50 + 3 * i, 60 + 1 * i] as const;
    const stack = frames(...Array.from({ length: 12 }, (_, i) => (i === 5 || i === 6 ? [] : [path(i)])));
    const { tracks } = linkDetections(stack, options);
    expect(tracks).toHaveLength(1);
    expect(tracks[0]!.points.map((p) => p.frameIndex)).toEqual([0, 1, 2, 3, 4, 7, 8, 9, 10, 11]);
  });

  it("does not bridge more missing frames than allowed", () => {
    const path = (i: number) => [50 + 3 * i, 60] as const;
    const stack = frames(...Array.from({ length: 14 }, (_, i) => (i >= 5 && i <= 8 ? [] : [path(i)])));
    const { tracks } = linkDetections(stack, options);
    expect(tracks.map((t) => t.points.length)).toEqual([5, 5]);
  });

  it("does not link a far jump: a new track starts there", () => {
    const stack = frames(...Array.from({ length: 12 }, (_, i) => [i < 6 ? ([50 + 2 * i, 50] as const) : ([200 + 2 * i, 150] as const)]));
    const { tracks } = linkDetections(stack, options);
    expect(tracks).toHaveLength(2);
    expect(tracks[0]!.points.every((p) => p.x < 100)).toBe(true);
    expect(tracks[1]!.points.every((p) => p.x > 200)).toBe(true);
  });

  it("leaves out tracks shorter than the minimum and counts them", () => {
    // A steady tracer plus a glint that shows in three frames only.
    const stack = frames(...Array.from({ length: 10 }, (_, i) => [[20 + i, 20] as const, i < 3 ? ([150, 150] as const) : null]));
    const { tracks, shortTracksDropped } = linkDetections(stack, options);
    expect(tracks).toHaveLength(1);
    expect(tracks[0]!.id).toBe(1);
    expect(shortTracksDropped).toBe(1);
  });
});

describe("linking rendered floats", () => {
  it("keeps two floats crossing at right angles on their own tracks through the frames where their blobs merge", () => {
    const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
    const spec: SyntheticRunSpec = {
      width: 320,
      height: 240,
      frames: 45,
      fps: 30,
      seed: 9,
      camera: "rotating",
      omega: 1,
      centre: { x: 160, y: 120 },
      pxPerM: 1,
      tankRadiusPx: 110,
      noiseSigma: 3,
      tracers: [
        { kind: "float", path: { kind: "line", from: { x: -70, y: -70 }, velocity: { x: 90, y: 90 } }, sigmaPx: 2.2, brightness: 110 },
        { kind: "float", path: { kind: "line", from: { x: -70, y: 70 }, velocity: { x: 90, y: -90 } }, sigmaPx: 2.2, brightness: 110 },
      ],
    };
    const plan = planDetection({ tracer: "float", centre: spec.centre, tankEdge: { cx: 160, cy: 120, r: 106 }, mirrored: false }, spec.width, spec.height);
    const renderer = createSyntheticRenderer(spec);
    const frames = Array.from({ length: spec.frames }, (_, i) => renderer.frame(i));
    const crops = frames.map((f) => cropForPlan(f, plan));
    const background = medianBackground(backgroundSampleIndices(crops.length).map((i) => crops[i]!.data));
    const detector = createDetector(cv, plan);
    const stack = crops.map((c, i) => ({ frameIndex: i, t: frames[i]!.t, detections: detector.detect(c, background) }));
    detector.dispose();
    // They meet at the centre at t = 0.78 s (frame 23): a single blob for a few frames.
    expect(stack.slice(21, 27).some((f) => f.detections.length < 2)).toBe(true);

    const { tracks } = linkDetections(stack, { ...options, maxStepPx: 10.6 });
    expect(tracks).toHaveLength(2);
    const nearest = (p: { x: number; y: number; frameIndex: number }) => {
      const [a, b] = frames[p.frameIndex]!.truth;
      if (!a || !b) throw new Error("the stack renders two floats");
      return Math.hypot(p.x - a.x, p.y - a.y) < Math.hypot(p.x - b.x, p.y - b.y) ? 0 : 1;
    };
    for (const track of tracks) {
      const before = track.points.filter((p) => p.frameIndex < 19).map(nearest);
      const after = track.points.filter((p) => p.frameIndex > 28).map(nearest);
      expect(before.length).toBeGreaterThan(15);
      expect(after.length).toBeGreaterThan(14);
      expect(new Set([...before, ...after]).size).toBe(1);
    }
    expect(new Set(tracks.map((t) => nearest(t.points[0]!))).size).toBe(2);
  });
});
