import { describe, expect, it } from "vitest";
import { createSyntheticRenderer, pathPosition, tracerPosition, type SyntheticRunSpec } from "./synthetic";
import { wrapAngle } from "../analysis/angles";

const omega = 1.5;
const base: SyntheticRunSpec = {
  width: 160,
  height: 120,
  frames: 5,
  fps: 30,
  seed: 3,
  camera: "rotating",
  omega,
  centre: { x: 80, y: 60 },
  pxPerM: 400,
  tankRadiusPx: 55,
  tracers: [
    {
      kind: "float",
      path: { kind: "inertial-circle", centre: { x: 0.01, y: -0.02 }, radius: 0.05, phase: 0 },
      sigmaPx: 2,
      brightness: 100,
    },
  ],
};

/** Angle seen from above (y up) of an image point about a centre, rad. */
function angleFromAbove(p: { x: number; y: number }, c: { x: number; y: number }): number {
  return Math.atan2(-(p.y - c.y), p.x - c.x);
}

describe("synthetic frame stacks (right-handed frame seen from above, image y down: common practice)", () => {
  it("draws an inertial circle clockwise seen from above for Ω > 0, one turn per π/Ω", () => {
    const path = base.tracers[0]!.path;
    const circleCentre = { x: 80 + 0.01 * 400, y: 60 + 0.02 * 400 };
    const a0 = angleFromAbove(tracerPosition(base, base.tracers[0]!, 0), circleCentre);
    const a1 = angleFromAbove(tracerPosition(base, base.tracers[0]!, 0.1), circleCentre);
    expect(wrapAngle(a1 - a0)).toBeCloseTo(-2 * omega * 0.1, 10);
    const period = Math.PI / omega;
    const start = pathPosition(path, omega, 0);
    const after = pathPosition(path, omega, period);
    expect(after.x).toBeCloseTo(start.x, 12);
    expect(after.y).toBeCloseTo(start.y, 12);
  });

  it("turns a point fixed on the table counterclockwise at Ω in a lab-fixed view", () => {
    const spec: SyntheticRunSpec = {
      ...base,
      camera: "lab",
      tracers: [{ kind: "float", path: { kind: "still", at: { x: 0.1, y: 0 } }, sigmaPx: 2, brightness: 100 }],
    };
    const a0 = angleFromAbove(tracerPosition(spec, spec.tracers[0]!, 0), spec.centre);
    const a1 = angleFromAbove(tracerPosition(spec, spec.tracers[0]!, 0.2), spec.centre);
    expect(wrapAngle(a1 - a0)).toBeCloseTo(omega * 0.2, 10);
    const mirrored = { ...spec, mirrored: true };
    const m0 = angleFromAbove(tracerPosition(mirrored, spec.tracers[0]!, 0), spec.centre);
    const m1 = angleFromAbove(tracerPosition(mirrored, spec.tracers[0]!, 0.2), spec.centre);
    expect(wrapAngle(m1 - m0)).toBeCloseTo(-omega * 0.2, 10);
  });

  it("renders the same bytes for the same seed, different noise for another, and puts the float where it says", () => {
    const a = createSyntheticRenderer(base).frame(2);
    const b = createSyntheticRenderer(base).frame(2);
    const c = createSyntheticRenderer({ ...base, seed: 4 }).frame(2);
    expect(Buffer.from(a.data).equals(Buffer.from(b.data))).toBe(true);
    expect(Buffer.from(a.data).equals(Buffer.from(c.data))).toBe(false);
    const { x, y } = a.truth[0]!;
    const at = (col: number, row: number) => a.data[(row * base.width + col) * 3 + 1]!;
    expect(at(Math.round(x), Math.round(y))).toBeGreaterThan(at(Math.round(x) + 8, Math.round(y)) + 60);
  });
});
