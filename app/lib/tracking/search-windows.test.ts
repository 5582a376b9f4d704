/**
 * Searching a frame first near where the tracers are heading: the windows worked out from earlier
 * frames, and the detector's promise that a window changes nothing it finds, only what it looks at.
 */
import { createRequire } from "node:module";
import { afterAll, describe, expect, it } from "vitest";
import { backgroundSampleIndices, medianBackground } from "./background";
import { createDetector, type Detector } from "./detect";
import { cropForPlan } from "./plan-crop";
import type { OpenCv } from "./opencv-types";
import { planDetection } from "./plan";
import { lastWholeFrame, searchedWhole, searchWindows, wholeSearchEvery } from "./search-windows";
import { createSyntheticRenderer, type SyntheticRunSpec } from "./synthetic";
import type { Detection } from "./types";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const detectors: Detector[] = [];
afterAll(() => detectors.forEach((d) => d.dispose()));

const at = (x: number, y: number, area = 40): Detection => ({ x, y, area, roundness: 0.9, intensity: 100 });

describe("the windows of a frame, from the frames searched before it", () => {
  it("puts the window where a steadily moving float is heading, wide enough for the float and the change of speed", () => {
    // 5 px a frame to the right, slowing by 0.1 px a frame each frame; frame i − 6 is the latest known.
    const recent = [[at(300, 200)], [at(294.9, 200)], [at(289.7, 200)]] as const;
    const windows = searchWindows({ recent, lastWhole: [at(280, 200)], lag: 6, maxStepPx: 30 });
    expect(windows).toHaveLength(1);
    const w = windows![0]!;
    expect(w.x).toBeCloseTo(300 + 6 * 5.1, 6);
    expect(w.y).toBeCloseTo(200, 6);
    // Kept up over six frames, a change of 0.1 px a frame² moves the float 0.1 · 6 · 7 / 2 = 2.1 px
    // off the straight line: the window must hold that and the float's own size, and stay small.
    const radius = Math.sqrt(40 / Math.PI);
    expect(w.reach).toBeGreaterThan(2.1 + radius);
    expect(w.reach).toBeLessThan(30);
  });

  it("searches the whole frame when a tracer has just appeared, has been missed, or a whole search found more", () => {
    const steady = [[at(300, 200)], [at(295, 200)], [at(290, 200)]] as const;
    const sources = { recent: steady, lastWhole: [at(285, 200)], lag: 6, maxStepPx: 30 };
    expect(searchWindows(sources)).not.toBeNull();
    // A second float in the latest frame with no predecessor.
    expect(searchWindows({ ...sources, recent: [[...steady[0], at(100, 100)], steady[1], steady[2]] })).toBeNull();
    // The float was missed in the frame before the latest.
    expect(searchWindows({ ...sources, recent: [steady[0], [], steady[2]] })).toBeNull();
    // Nothing found, or a frame not known.
    expect(searchWindows({ ...sources, recent: [[], steady[1], steady[2]] })).toBeNull();
    expect(searchWindows({ ...sources, recent: [steady[0], null, steady[2]] })).toBeNull();
    // The last whole search found a second tracer that the windows do not follow.
    expect(searchWindows({ ...sources, lastWhole: [at(285, 200), at(100, 100)] })).toBeNull();
    // A jump beyond the linker's gate is not the same tracer.
    expect(searchWindows({ ...sources, recent: [steady[0], [at(250, 200)], steady[2]] })).toBeNull();
  });

  it("searches every eighth frame whole, by its number alone", () => {
    expect(wholeSearchEvery).toBe(8);
    expect([0, 7, 8, 9, 16].map(searchedWhole)).toEqual([true, false, true, false, true]);
    expect([0, 7, 8, 13, 16].map(lastWholeFrame)).toEqual([0, 0, 8, 8, 16]);
  });
});

describe("a detector given windows", () => {
  // Two floats far apart in a large tank, so that a window around one leaves the other unsearched.
  const spec: SyntheticRunSpec = {
    width: 640,
    height: 480,
    frames: 21,
    fps: 30,
    seed: 5,
    camera: "rotating",
    omega: 1.2,
    centre: { x: 320, y: 240 },
    pxPerM: 1,
    tankRadiusPx: 230,
    noiseSigma: 3,
    illuminationGradient: 0.3,
    glare: { x: 420, y: 330, radiusPx: 6, strength: 140 },
    tracers: [
      { kind: "float", path: { kind: "inertial-circle", centre: { x: -120, y: 60 }, radius: 40, phase: 0.3 }, sigmaPx: 2.2, brightness: 110 },
      { kind: "float", path: { kind: "inertial-circle", centre: { x: 120, y: -80 }, radius: 40, phase: 2.0 }, sigmaPx: 2.2, brightness: 110 },
    ],
  };
  const plan = planDetection({ tracer: "float", centre: spec.centre, tankEdge: { cx: 320, cy: 240, r: 225 }, mirrored: false }, spec.width, spec.height);
  const renderer = createSyntheticRenderer(spec);
  const crops = Array.from({ length: spec.frames }, (_, i) => cropForPlan(renderer.frame(i), plan));
  const background = medianBackground(backgroundSampleIndices(crops.length).map((i) => crops[i]!.data));

  it("finds in its windows exactly what the whole search finds there, and nothing outside them", () => {
    const detector = createDetector(cv, plan);
    detectors.push(detector);
    for (const crop of crops.slice(1)) {
      const whole = detector.detect(crop, background);
      expect(whole).toHaveLength(2);
      const first = whole.find((d) => d.x < 320)!;
      const windowed = detector.detect(crop, background, [{ x: first.x + 3, y: first.y - 2, reach: 12 }]);
      expect(windowed).toEqual([first]);
    }
  });

  it("searches the whole frame when a window holds nothing: a wrong guess costs time, not the tracer", () => {
    const detector = createDetector(cv, plan);
    detectors.push(detector);
    const crop = crops[10]!;
    const whole = detector.detect(crop, background);
    expect(whole).toHaveLength(2);
    expect(detector.detect(crop, background, [{ x: 320, y: 400, reach: 10 }])).toEqual(whole);
  });
});
