/**
 * The tracers of the benchmark stacks (scripts/bench-stacks.ts) and of a tracking thread's practice
 * round (app/.server/tracking/worker-practice.ts), described once, without their paths: a white
 * float of a Gaussian spot, and a low-contrast elongated dye patch (3:1, contrast 0.6) that
 * spreads, stretches and turns slowly. Invented for testing, not measured on a tank.
 */
import type { SyntheticPath, SyntheticTracer } from "./synthetic-spec";

export function exampleFloat(path: SyntheticPath): SyntheticTracer {
  return { kind: "float", path, sigmaPx: 3.5, brightness: 120 };
}

export function exampleDyePatch(path: SyntheticPath): SyntheticTracer {
  return {
    kind: "dye",
    path,
    sigmaAlongPx: 9,
    sigmaAcrossPx: 3,
    colour: [200, 30, 60],
    opacity: 0.6,
    spreadPerS: 0.02,
    stretchPerS: 0.01,
    turnRadPerS: 0.1,
  };
}
