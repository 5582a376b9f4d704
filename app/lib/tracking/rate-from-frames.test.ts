import { describe, expect, it } from "vitest";
import { rpmToRadPerS } from "../analysis/units";
import { createSyntheticRenderer, type SyntheticRunSpec } from "./synthetic";
import { rgbToGrey } from "./grey-image";
import { createMarkFollower } from "./rate-mark";
import { createSurroundingsFollower } from "./rate-surroundings";

const setRpm = 10;
// The table really turns 4 % faster than it was set to.
const trueOmega = rpmToRadPerS(setRpm * 1.04);
const omegaSet = rpmToRadPerS(setRpm);

function spec(camera: "lab" | "rotating", extra: Partial<SyntheticRunSpec> = {}): SyntheticRunSpec {
  return {
    width: 320,
    height: 240,
    frames: 150,
    fps: 15,
    seed: 7,
    camera,
    omega: trueOmega,
    centre: { x: 161.3, y: 118.6 },
    pxPerM: 500,
    tankRadiusPx: 78,
    noiseSigma: 4,
    tankMarks: true,
    tracers: [{ kind: "float", sigmaPx: 2.5, brightness: 110, path: { kind: "inertial-circle", centre: { x: 0.01, y: 0 }, radius: 0.05, phase: 0.2 } }],
    ...extra,
  };
}

function feed(s: SyntheticRunSpec, add: (t: number, image: ReturnType<typeof rgbToGrey>) => void) {
  const renderer = createSyntheticRenderer(s);
  for (let i = 0; i < s.frames; i++) {
    const f = renderer.frame(i);
    add(f.t, rgbToGrey(f.data, f.width, f.height));
  }
}

describe("the table's rate read from rendered frames whose true rate is 4 % off the set rate", () => {
  it("lab-fixed camera: follows the mark on the table marked on the first frame", () => {
    const s = spec("lab", { tableMark: { radiusPx: 100, angle: 0.7, sizePx: 5 } });
    const mark = { x: s.centre.x + 100 * Math.cos(0.7) + 0.8, y: s.centre.y - 100 * Math.sin(0.7) - 0.6 };
    const follower = createMarkFollower({ centre: s.centre, mark, mirrored: false, omegaSet });
    feed(s, (t, image) => follower.add(t, image));
    const result = follower.result();
    expect(result.reason).toBeNull();
    expect(result.nPoints).toBeGreaterThan(0.95 * s.frames);
    expect(Math.abs(result.omega! - trueOmega)).toBeLessThanOrEqual(2 * result.stdError!);
    // Precise enough to tell the 4 % apart: the set rate lies far outside the error.
    expect(Math.abs(result.omega! - omegaSet)).toBeGreaterThan(10 * result.stdError!);
  });

  it("lab-fixed camera, mirrored and turning clockwise: the sign is the table's", () => {
    const s = spec("lab", { omega: -trueOmega, mirrored: true, tableMark: { radiusPx: 95, angle: 2.2, sizePx: 5 } });
    // Mirrored: the image x of a table point is flipped about the centre.
    const mark = { x: s.centre.x - 95 * Math.cos(2.2), y: s.centre.y - 95 * Math.sin(2.2) };
    const follower = createMarkFollower({ centre: s.centre, mark, mirrored: true, omegaSet: -omegaSet });
    feed(s, (t, image) => follower.add(t, image));
    const result = follower.result();
    expect(Math.abs(result.omega! + trueOmega)).toBeLessThanOrEqual(2 * result.stdError!);
    expect(Math.abs(result.omega! + omegaSet)).toBeGreaterThan(10 * result.stdError!);
  });

  it("co-rotating camera: the lab-fixed surroundings beyond the tank turn past at −Ω", () => {
    const s = spec("rotating", { surroundingsFromPx: 92 });
    const follower = createSurroundingsFollower({ centre: s.centre, innerRadiusPx: 94, mirrored: false, omegaSet });
    feed(s, (t, image) => follower.add(t, image));
    const result = follower.result();
    expect(result.reason).toBeNull();
    expect(result.nPoints).toBeGreaterThan(0.95 * s.frames);
    expect(Math.abs(result.omega! - trueOmega)).toBeLessThanOrEqual(2 * result.stdError!);
    expect(Math.abs(result.omega! - omegaSet)).toBeGreaterThan(10 * result.stdError!);
  });

  it("co-rotating camera without surroundings in view, or a mark off the frame: no rate, with a reason", () => {
    const s = spec("rotating", { surroundingsFromPx: 92, tankRadiusPx: 115, frames: 6 });
    const follower = createSurroundingsFollower({ centre: s.centre, innerRadiusPx: 118, mirrored: false, omegaSet });
    feed(s, (t, image) => follower.add(t, image));
    expect(follower.result().omega).toBeNull();
    expect(follower.result().reason).toMatch(/tank fills the frame/);
    const mark = createMarkFollower({ centre: s.centre, mark: { x: 2, y: 3 }, mirrored: false, omegaSet });
    feed(s, (t, image) => mark.add(t, image));
    expect(mark.result().reason).toMatch(/too near the edge/);
  });
});
