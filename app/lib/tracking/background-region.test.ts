/**
 * A dye background made only inside the tank edge (background-region.ts): the same numbers as the
 * whole crop's where anything reads them, and nothing the detector does reads outside it, with a
 * dye patch that runs along the rim (its exclusions reach past the edge).
 */
import { createRequire } from "node:module";
import { afterAll, describe, expect, it } from "vitest";
import { backgroundSampleIndices, dyeBackground, tracerExclusions } from "./background";
import { fillChannelsFromSurroundings, minimumFreeSamples } from "./background-fill";
import { medianOverRegion, regionBeyond, tankRegion, withExclusions } from "./background-region";
import { createDetector, type Detector } from "./detect";
import type { OpenCv } from "./opencv-types";
import { planDetection } from "./plan";
import { cropForPlan } from "./plan-crop";
import { createSyntheticRenderer, type SyntheticRunSpec } from "./synthetic";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const detectors: Detector[] = [];
afterAll(() => detectors.forEach((d) => d.dispose()));

const centre = { x: 160.3, y: 119.6 };
const tankEdge = { cx: centre.x, cy: centre.y, r: 106 };
/** As the tracking job's region: the detection block and 2 px more (stack-background.ts). */
const margin = (shrink: number) => shrink + 2;

const spec: SyntheticRunSpec = {
  width: 320,
  height: 240,
  frames: 42,
  fps: 30,
  seed: 5,
  camera: "lab",
  omega: 1.2,
  centre,
  pxPerM: 1,
  tankRadiusPx: 110,
  noiseSigma: 3,
  illuminationGradient: 0.3,
  glare: { x: 230, y: 170, radiusPx: 6, strength: 140 },
  // Round the rim: the patch's 3.5 σ exclusions cross the tank edge.
  tracers: [
    {
      kind: "dye",
      path: { kind: "inertial-circle", centre: { x: 0, y: 0 }, radius: 97, phase: 0.3 },
      sigmaAlongPx: 5,
      sigmaAcrossPx: 2.2,
      colour: [200, 30, 60],
      opacity: 0.8,
    },
  ],
};

function setUp() {
  const plan = planDetection({ tracer: "dye", centre, tankEdge, mirrored: false }, spec.width, spec.height);
  const renderer = createSyntheticRenderer(spec);
  const frames = Array.from({ length: spec.frames }, (_, i) => cropForPlan(renderer.frame(i), plan).data);
  const detector = createDetector(cv, plan);
  detectors.push(detector);
  const { width, height } = plan.crop;
  const detect = (frame: Uint8Array, background: Uint8Array) => detector.detect({ data: frame, width, height, channels: 3 }, background);
  const samples = backgroundSampleIndices(frames.length).map((i) => frames[i]!);
  return { plan, frames, samples, detect, width, height };
}

/** The still background as the tracking job makes it for dye (stack-background.ts), in one thread. */
function regionBackground(
  samples: Uint8Array[],
  width: number,
  region: Uint8Array,
  detect: (f: Uint8Array, b: Uint8Array) => unknown,
  plan: ReturnType<typeof setUp>["plan"],
) {
  const pixels = region.length;
  const plain = new Uint8Array(pixels * 3);
  medianOverRegion(samples, plain, 0, pixels, region, undefined, undefined, 3);
  const discs = tracerExclusions(
    samples.map((s) => detect(s, plain) as never),
    plan.crop,
    plan.shrink,
  );
  const wider = withExclusions(region, width, discs, 2);
  medianOverRegion(samples, plain, 0, pixels, regionBeyond(wider, region), undefined, undefined, 3);
  const still = new Uint8Array(pixels * 3);
  const used = new Uint8Array(pixels);
  medianOverRegion(samples, still, 0, pixels, wider, { width, discs }, used, 3, plain);
  fillChannelsFromSurroundings(still, used, width, 3, minimumFreeSamples(samples.length));
  return { still, wider, discs };
}

describe("a dye background made inside the tank edge only", () => {
  const { plan, frames, samples, detect, width } = setUp();
  const region = tankRegion(width, plan.crop.height, plan.tank, margin(plan.shrink))!;
  const whole = dyeBackground(samples, width, detect, plan.crop, plan.shrink);
  const made = regionBackground(samples, width, region, detect, plan);

  it("holds the whole crop's numbers wherever it is made, and nothing beyond", () => {
    // The patch's exclusions reached past the region: the widening was needed.
    expect(made.wider).not.toBe(region);
    expect(made.discs.length).toBeGreaterThan(0);
    let inside = 0;
    let differ = 0;
    let writtenOutside = 0;
    for (let p = 0; p < region.length; p++) {
      for (let c = 0; c < 3; c++) {
        const q = 3 * p + c;
        if (made.wider[p]) differ += made.still[q] === whole[q] ? 0 : 1;
        else writtenOutside += made.still[q] === 0 ? 0 : 1;
      }
      inside += region[p]!;
    }
    expect({ differ, writtenOutside }).toEqual({ differ: 0, writtenOutside: 0 });
    // The crop's corners outside the tank are left out.
    expect(inside / region.length).toBeLessThan(0.85);
  });

  it("gives the detector the same finds as the whole crop's, and so does any value outside it: nothing reads there", () => {
    const scrambled = whole.slice();
    for (let p = 0; p < region.length; p++) {
      if (region[p]) continue;
      for (let c = 0; c < 3; c++) scrambled[3 * p + c] = (p + c) % 2 ? 255 : 0;
    }
    const expected = frames.map((f) => detect(f, whole));
    expect(expected.filter((found) => found.length > 0).length).toBeGreaterThan(0.9 * frames.length);
    expect(frames.map((f) => detect(f, made.still))).toEqual(expected);
    expect(frames.map((f) => detect(f, scrambled))).toEqual(expected);
  });
});
