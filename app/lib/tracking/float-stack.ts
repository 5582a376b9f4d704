import type { SyntheticRunSpec } from "./synthetic";
import { rpmToRadPerS } from "../analysis/units";

/**
 * The small rendered run the queue tests and the two-process test track: a float on an inertial
 * circle, 320 × 240 px, table at 15 rpm, 30 frames/s, seen by a camera turning with the table.
 */
export const floatStackCentre = { x: 160.3, y: 119.6 };

export function floatStackSpec(frames: number, { seed = 11, withTracer = true }: { seed?: number; withTracer?: boolean } = {}): SyntheticRunSpec {
  return {
    width: 320,
    height: 240,
    frames,
    fps: 30,
    seed,
    camera: "rotating",
    omega: rpmToRadPerS(15),
    centre: floatStackCentre,
    pxPerM: 600,
    tankRadiusPx: 110,
    noiseSigma: 2,
    tracers: withTracer
      ? [{ kind: "float", sigmaPx: 2.5, brightness: 120, path: { kind: "inertial-circle", centre: { x: 0.01, y: 0 }, radius: 0.06, phase: 0 } }]
      : [],
  };
}
