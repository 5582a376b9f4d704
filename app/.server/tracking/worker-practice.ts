/**
 * A tracking thread's practice round, run once when the server readies the thread it keeps
 * (tracking-pool.ts `readyTrackingPool`): the detector finds a float and a dye patch in small
 * rendered frames, over the whole frame and in windows, a few times over. V8 compiles the
 * detector's JavaScript and OpenCV's WebAssembly with its optimising compilers only once code has
 * run often; a thread that has practised does that before the first job instead of during it.
 * Runs inside the worker thread; no files, no database.
 */
import { medianInto } from "../../lib/tracking/background";
import { createDetector } from "../../lib/tracking/detect";
import { exampleDyePatch, exampleFloat } from "../../lib/tracking/example-tracers";
import type { OpenCv } from "../../lib/tracking/opencv-types";
import { planDetection, type DetectionPlan } from "../../lib/tracking/plan";
import { createSyntheticRenderer, type SyntheticRunSpec } from "../../lib/tracking/synthetic";
import type { TrackingSetup } from "../../lib/tracking/types";

export interface PracticeResult {
  /** Frames searched, whole and in windows, over every round and both tracers. */
  searched: number;
  /** Of those, frames in which the tracer was found within 2 px of where it was drawn. */
  found: number;
}

const side = { width: 320, height: 240 };
const frames = 12;
const omega = (2 * Math.PI * 10) / 60;

function spec(tracer: "float" | "dye"): SyntheticRunSpec {
  return {
    ...side,
    frames,
    // Frames far enough apart that the tracer moves off each pixel, as the background's median needs.
    fps: 5,
    seed: 7,
    camera: "rotating",
    omega,
    centre: { x: 160, y: 120 },
    pxPerM: 400,
    tankRadiusPx: 100,
    noiseSigma: 3,
    glare: null,
    tracers: [
      tracer === "float"
        ? exampleFloat({ kind: "inertial-circle", centre: { x: -0.02, y: 0.01 }, radius: 0.08, phase: 0.5, drag: 0.02 })
        : exampleDyePatch({ kind: "inertial-circle", centre: { x: 0.02, y: -0.01 }, radius: 0.08, phase: 2, drag: 0.02 }),
    ],
  };
}

/** The plan's crop and channels of an RGB frame, as the decoder hands them over (green alone for floats). */
function cropOf(rgb: Uint8Array, plan: DetectionPlan): Uint8Array {
  const { left, top, width, height } = plan.crop;
  const out = new Uint8Array(width * height * plan.channels);
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const from = 3 * ((top + row) * side.width + left + col);
      const to = (row * width + col) * plan.channels;
      if (plan.channels === 1) out[to] = rgb[from + 1]!;
      else out.set(rgb.subarray(from, from + 3), to);
    }
  }
  return out;
}

export function practise(cv: OpenCv, rounds = 4): PracticeResult {
  let searched = 0;
  let found = 0;
  for (const tracer of ["float", "dye"] as const) {
    const run = spec(tracer);
    const setup: TrackingSetup = {
      tracer,
      centre: run.centre,
      tankEdge: { cx: run.centre.x, cy: run.centre.y, r: run.tankRadiusPx - 3 },
      mirrored: false,
    };
    const plan = planDetection(setup, side.width, side.height);
    const renderer = createSyntheticRenderer(run);
    const rendered = Array.from({ length: frames }, (_, i) => renderer.frame(i));
    const images = rendered.map((frame) => cropOf(frame.data, plan));
    const background = new Uint8Array(images[0]!.length);
    medianInto(images, background, 0, images[0]!.length / plan.channels, undefined, undefined, plan.channels);
    const detector = createDetector(cv, plan);
    try {
      for (let round = 0; round < rounds; round++) {
        rendered.forEach((frame, i) => {
          const truth = frame.truth[0]!;
          const image = { data: images[i]!, width: plan.crop.width, height: plan.crop.height, channels: plan.channels };
          const windows = round % 2 === 1 ? [{ x: truth.x, y: truth.y, reach: 12 }] : undefined;
          const detections = detector.detect(image, background, windows);
          searched++;
          if (detections.some((d) => Math.hypot(d.x - truth.x, d.y - truth.y) <= 2)) found++;
        });
      }
    } finally {
      detector.dispose();
    }
  }
  return { searched, found };
}
