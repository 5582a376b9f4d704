/**
 * Accuracy of the dye patch centre on rendered low-contrast stacks, against the dye-weighted
 * centre the renderer knows, with floats on the same view for comparison.
 */
import { createRequire } from "node:module";
import { afterAll, describe, expect, it } from "vitest";
import { backgroundSampleIndices, dyeBackground, floatBackground } from "./background";
import { createDetector, type Detector, type FrameImage } from "./detect";
import { cropForPlan } from "./plan-crop";
import type { OpenCv } from "./opencv-types";
import { planDetection, type DetectionPlan } from "./plan";
import { createSyntheticRenderer, type SyntheticFrame, type SyntheticRunSpec, type SyntheticTracer } from "./synthetic";
import type { Detection } from "./types";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const detectors: Detector[] = [];
afterAll(() => detectors.forEach((d) => d.dispose()));

const centre = { x: 323.4, y: 177.9 };
const tankEdge = { cx: centre.x, cy: centre.y, r: 162 };
const tenRpm = (10 * 2 * Math.PI) / 60;

/**
 * A patch carried round by the table, seen by a lab-fixed camera: a Gaussian ellipse of 9 × 3 px
 * (3:1) whose long axis follows the motion and turns a further 0.1 rad/s, spreading 8 % and
 * stretching 5 % more per second; peak dye share 0.6 over the water; sensor noise σ = 7 grey
 * levels; the light 30 % brighter on the right than on the left; glare and tank marks in view.
 */
type DyeTracer = Extract<SyntheticTracer, { kind: "dye" }>;

function dyeTracer(overrides: Partial<DyeTracer> = {}): DyeTracer {
  return {
    kind: "dye",
    path: { kind: "still", at: { x: -70, y: 40 } },
    sigmaAlongPx: 9,
    sigmaAcrossPx: 3,
    colour: [200, 30, 60],
    opacity: 0.6,
    spreadPerS: 0.08,
    stretchPerS: 0.05,
    turnRadPerS: 0.1,
    ...overrides,
  };
}

function stack(seed: number, tracer: SyntheticTracer, overrides: Partial<SyntheticRunSpec> = {}): SyntheticRunSpec {
  return {
    width: 640,
    height: 360,
    frames: 60,
    fps: 30,
    seed,
    camera: "lab",
    omega: tenRpm,
    centre,
    pxPerM: 1,
    tankRadiusPx: 168,
    noiseSigma: 7,
    illuminationGradient: 0.3,
    glare: { x: centre.x + 90, y: centre.y - 80, radiusPx: 10, strength: 70 },
    tankMarks: true,
    tracers: [tracer],
    ...overrides,
  };
}

interface Errors {
  dx: number[];
  dy: number[];
  missed: number;
}

function collect(frames: SyntheticFrame[], found: Detection[][], into: Errors): void {
  found.forEach((detections, i) => {
    const d = detections[0];
    const truth = frames[i]!.truth[0]!;
    if (!d) {
      into.missed++;
      return;
    }
    into.dx.push(d.x - truth.x);
    into.dy.push(d.y - truth.y);
  });
}

/**
 * The least RMS 2-D error any unbiased centre estimate can have for an elliptical Gaussian patch
 * of peak A over white noise σ, axes a and b: the Fisher information of the centre along an axis
 * is (1/σ²) Σ (∂signal/∂centre)², which for the Gaussian comes to π A² b / (2 σ² a) along a and
 * π A² a / (2 σ² b) along b (Kay 1993, Fundamentals of Statistical Signal Processing: Estimation
 * Theory, ch. 3, the bound for a signal in white Gaussian noise; from memory). Only the ratio of
 * the axes counts, not their size. Averaged over the frames as the patch stretches; the light
 * at the patch is taken as 1 (it is within ±5 % there).
 */
function centreBound(tracer: DyeTracer, spec: SyntheticRunSpec): number {
  const water = [62, 74, 84];
  const amplitude = tracer.opacity * Math.hypot(...tracer.colour.map((c, i) => c - water[i]!));
  const sigma = spec.noiseSigma ?? 3;
  let variance = 0;
  for (let i = 0; i < spec.frames; i++) {
    const ratio = (tracer.sigmaAlongPx / tracer.sigmaAcrossPx) * (1 + (tracer.stretchPerS ?? 0) * (i / spec.fps));
    variance += ((2 * sigma * sigma) / (Math.PI * amplitude * amplitude)) * (ratio + 1 / ratio);
  }
  return Math.sqrt(variance / spec.frames);
}

const rms = (e: Errors) => Math.sqrt(e.dx.reduce((s, v, i) => s + v * v + e.dy[i]! ** 2, 0) / Math.max(1, e.dx.length));
const meanOf = (values: number[]) => values.reduce((s, v) => s + v, 0) / Math.max(1, values.length);
const empty = (): Errors => ({ dx: [], dy: [], missed: 0 });

function rendered(spec: SyntheticRunSpec, plan: DetectionPlan): { frames: SyntheticFrame[]; crops: FrameImage[] } {
  const renderer = createSyntheticRenderer(spec);
  const frames = Array.from({ length: spec.frames }, (_, i) => renderer.frame(i));
  return { frames, crops: frames.map((f) => cropForPlan(f, plan)) };
}

function detector(plan: DetectionPlan): Detector {
  const d = createDetector(cv, plan);
  detectors.push(d);
  return d;
}

/** The dye stacks of `seeds` through the production steps: colour background, then the patch centre. */
function dyeErrors(seeds: number[], tracer: SyntheticTracer, overrides: Partial<SyntheticRunSpec> = {}): { patch: Errors; colourOnly: Errors } {
  const patch = empty();
  const colourOnly = empty();
  for (const seed of seeds) {
    const spec = stack(seed, tracer, overrides);
    const plan = planDetection({ tracer: "dye", centre, tankEdge, mirrored: false }, spec.width, spec.height);
    const find = detector(plan);
    const { frames, crops } = rendered(spec, plan);
    const image = (data: Uint8Array): FrameImage => ({ data, width: plan.crop.width, height: plan.crop.height, channels: 3 });
    const background = dyeBackground(
      backgroundSampleIndices(crops.length).map((i) => crops[i]!.data),
      plan.crop.width,
      (f, b) => find.detect(image(f), b),
      plan.crop,
      plan.shrink,
    );
    collect(
      frames,
      crops.map((c) => find.detect(c, background)),
      patch,
    );
    collect(
      frames,
      crops.map((c) => find.detect(c, null)),
      colourOnly,
    );
  }
  return { patch, colourOnly };
}

describe("dye patch centre on rendered low-contrast stacks (peak dye share 0.6, noise σ = 7, lab camera, 10 rpm, seeds 1–4)", () => {
  const seeds = [1, 2, 3, 4];
  const { patch, colourOnly } = dyeErrors(seeds, dyeTracer());

  it("is within 0.15 px RMS of the dye-weighted centre in every frame found, and finds every frame", () => {
    const bound = centreBound(dyeTracer(), stack(1, dyeTracer()));
    console.info(
      `dye, 3:1 patch, contrast 0.6, σ 7: RMS ${rms(patch).toFixed(3)} px over ${patch.dx.length} frames ` +
        `(colour threshold alone: ${rms(colourOnly).toFixed(3)} px; least possible: ${bound.toFixed(3)} px)`,
    );
    expect(patch.missed).toBe(0);
    expect(patch.dx).toHaveLength(seeds.length * 60);
    expect(rms(patch)).toBeLessThanOrEqual(0.15);
    // The whole patch does better than the colour blob's own centroid on the same frames.
    expect(rms(patch)).toBeLessThan(0.75 * rms(colourOnly));
  });

  it("comes within 25 % of the least error possible at this contrast (Kay 1993, Cramér–Rao bound in white Gaussian noise)", () => {
    const bound = centreBound(dyeTracer(), stack(1, dyeTracer()));
    console.info(`dye: RMS ${rms(patch).toFixed(3)} px = ${(rms(patch) / bound).toFixed(2)} × the bound ${bound.toFixed(3)} px`);
    expect(rms(patch)).toBeLessThanOrEqual(1.25 * bound);
  });

  it("is not pulled towards the brighter side by the uneven light (mean error per axis within 0.03 px)", () => {
    const bias = { x: meanOf(patch.dx), y: meanOf(patch.dy) };
    console.info(`dye, light 30 % brighter on the right: mean error ${bias.x.toFixed(3)}, ${bias.y.toFixed(3)} px`);
    expect(Math.abs(bias.x)).toBeLessThanOrEqual(0.03);
    expect(Math.abs(bias.y)).toBeLessThanOrEqual(0.03);
  });
});

describe("dye patch centre under harder light", () => {
  it("a light 80 % brighter on the right still leaves the mean error per axis within 0.03 px and the RMS within 0.15 px (seeds 5–6)", () => {
    const { patch } = dyeErrors([5, 6], dyeTracer(), { illuminationGradient: 0.8 });
    const bias = { x: meanOf(patch.dx), y: meanOf(patch.dy) };
    console.info(`dye, light gradient 0.8: RMS ${rms(patch).toFixed(3)} px, mean error ${bias.x.toFixed(3)}, ${bias.y.toFixed(3)} px`);
    expect(patch.missed).toBe(0);
    expect(rms(patch)).toBeLessThanOrEqual(0.15);
    expect(Math.abs(bias.x)).toBeLessThanOrEqual(0.03);
    expect(Math.abs(bias.y)).toBeLessThanOrEqual(0.03);
  });

  it("a dark dye (below the water in every channel) comes as close to its own bound as the bright one (within 25 %)", () => {
    const dark = dyeTracer({ colour: [12, 20, 70], opacity: 0.9 });
    const { patch } = dyeErrors([7, 8], dark);
    const bound = centreBound(dark, stack(7, dark));
    console.info(`dark dye: RMS ${rms(patch).toFixed(3)} px = ${(rms(patch) / bound).toFixed(2)} × its bound ${bound.toFixed(3)} px`);
    expect(patch.missed).toBe(0);
    expect(rms(patch)).toBeLessThanOrEqual(1.25 * bound);
  });
});

describe("floats on the same view stay at 0.05 px", () => {
  it("a float of peak 150 grey levels, σ 3 px, noise σ = 3 as in the float tests, lab camera (seeds 1–2): RMS ≤ 0.05 px", () => {
    const errors = empty();
    for (const seed of [1, 2]) {
      const tracer: SyntheticTracer = { kind: "float", path: { kind: "still", at: { x: -70, y: 40 } }, sigmaPx: 3, brightness: 150 };
      const spec = stack(seed, tracer, { noiseSigma: 3 });
      const plan = planDetection({ tracer: "float", centre, tankEdge, mirrored: false }, spec.width, spec.height);
      const find = detector(plan);
      const { frames, crops } = rendered(spec, plan);
      const image = (data: Uint8Array): FrameImage => ({ data, width: plan.crop.width, height: plan.crop.height, channels: 1 });
      const background = floatBackground(
        backgroundSampleIndices(crops.length).map((i) => crops[i]!.data),
        plan.crop.width,
        (f, b) => find.detect(image(f), b),
        plan.crop,
        plan.shrink,
      );
      collect(
        frames,
        crops.map((c) => find.detect(c, background)),
        errors,
      );
    }
    console.info(`float, σ 3: RMS ${rms(errors).toFixed(3)} px`);
    expect(errors.missed).toBe(0);
    expect(rms(errors)).toBeLessThanOrEqual(0.05);
  });
});
