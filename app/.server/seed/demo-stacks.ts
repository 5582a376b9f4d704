// The demo's rendered frame stacks: the seeded runs and `npm run demo:frames` draw the same scene.
import type { SyntheticRunSpec } from "~/lib/tracking/synthetic";
import { omegaFromTableRate } from "~/lib/analysis/run-omega";

export const W = 800;
export const H = 450;
export const FPS = 30;
export const PX_PER_M = 700;
export const demoCentre = { x: W / 2 + 3.4, y: H / 2 - 2.1 };
export const tankRadiusPx = Math.min(W, H) / 2 - 12;

export interface DemoStack {
  frames: number;
  seed: number;
  cameraMode: "rotating" | "lab";
  /** The rate the table really turns at. */
  rpm: number;
  direction: "ccw" | "cw";
  tracer: "float" | "dye";
}

/** One demo stack: known inertial circles, sensor noise, glare and tank marks. */
export function demoStackSpec(stack: DemoStack): SyntheticRunSpec {
  const centre = demoCentre;
  return {
    width: W,
    height: H,
    frames: stack.frames,
    fps: FPS,
    seed: stack.seed,
    camera: stack.cameraMode,
    omega: omegaFromTableRate(stack.rpm, stack.direction),
    centre,
    pxPerM: PX_PER_M,
    tankRadiusPx,
    noiseSigma: 3,
    illuminationGradient: 0.12,
    glare: { x: centre.x + 90, y: centre.y - 80, radiusPx: 10, strength: 70 },
    tankMarks: true,
    tracers: [
      stack.tracer === "float"
        ? {
            kind: "float",
            sigmaPx: 3,
            brightness: 120,
            path: { kind: "inertial-circle", centre: { x: 0.03, y: -0.02 }, radius: 0.08, phase: 0.4, drag: 0.02 },
          }
        : {
            kind: "dye",
            sigmaAlongPx: 6,
            sigmaAcrossPx: 3.5,
            colour: [200, 40, 120],
            opacity: 0.85,
            path: { kind: "inertial-circle", centre: { x: -0.05, y: 0.04 }, radius: 0.11, phase: 1.2, drag: 0.01 },
          },
    ],
  };
}
