/**
 * The two 600-frame 1280×720 stacks of `npm run bench` and the view setup they are tracked with,
 * in one place for every script that times the tracker on them (bench-tracking.ts renders them;
 * bench-dye-detector.ts and bench-handover.ts reuse them). A float on an inertial circle under a
 * co-rotating camera; a low-contrast elongated dye patch (3:1, contrast 0.6, noise σ 7) carried
 * round by the table under a lab-fixed camera.
 */
import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { exampleDyePatch, exampleFloat } from "../app/lib/tracking/example-tracers";
import type { SyntheticRunSpec } from "../app/lib/tracking/synthetic";
import type { TrackingSetup } from "../app/lib/tracking/types";

export type BenchTracer = "float" | "dye";

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
/** 10 turns a minute. */
export const benchOmega = (2 * Math.PI * 10) / 60;

const floatSpec: SyntheticRunSpec = {
  width: 1280,
  height: 720,
  frames: 600,
  fps: 30,
  seed: 2024,
  camera: "rotating",
  omega: benchOmega,
  centre: { x: 640, y: 360 },
  pxPerM: 1000,
  tankRadiusPx: 340,
  noiseSigma: 3,
  illuminationGradient: 0.25,
  glare: { x: 820, y: 230, radiusPx: 12, strength: 150 },
  tracers: [exampleFloat({ kind: "inertial-circle", centre: { x: -0.05, y: 0.03 }, radius: 0.12, phase: 0.5, drag: 0.02 })],
};
const dyeSpec: SyntheticRunSpec = {
  ...floatSpec,
  camera: "lab",
  noiseSigma: 7,
  tracers: [exampleDyePatch({ kind: "still", at: { x: -0.15, y: 0.08 } })],
};

export function benchSpec(tracer: BenchTracer): SyntheticRunSpec {
  return tracer === "dye" ? dyeSpec : floatSpec;
}

/** The view setup as the server gives it for the bench's run: the set rate and camera mode feed the background's turning model. */
export function benchSetup(tracer: BenchTracer): TrackingSetup {
  const spec = benchSpec(tracer);
  return {
    tracer,
    centre: spec.centre,
    tankEdge: { cx: 640, cy: 360, r: 335 },
    mirrored: false,
    rotation: { omega: benchOmega, cameraMode: spec.camera },
  };
}

/** The folder of the stack's rendered frames, keyed by its description and the renderer's source, so a change to either renders anew. */
export function benchStackDir(tracer: BenchTracer): string {
  const key = createHash("sha256")
    .update(JSON.stringify(benchSpec(tracer)))
    .update(readFileSync(path.join(root, "app/lib/tracking/synthetic.ts")))
    .update(readFileSync(path.join(root, "app/lib/tracking/synthetic-spec.ts")))
    .digest("hex")
    .slice(0, 12);
  return path.join(root, `node_modules/.cache/tankside-bench/${tracer}-600-1280x720-${key}`);
}
