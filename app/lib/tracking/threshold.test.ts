/**
 * The dye threshold at reduced resolution keeps the colour background's block sums from one frame
 * to the next: what it marks must be what a fresh threshold marks, for the same background and for
 * a new one.
 */
import { describe, expect, it } from "vitest";
import { defaultDyeColour, type DetectionPlan } from "./plan";
import { createThreshold } from "./threshold";

const width = 96;
const height = 64;
const shrink = 2;
const plan: DetectionPlan = {
  tracer: "dye",
  frameWidth: width,
  frameHeight: height,
  crop: { left: 0, top: 0, width, height },
  channels: 3,
  shrink,
  smallWidth: width / shrink,
  smallHeight: height / shrink,
  tank: null,
  minAreaPx: 12,
  maxAreaPx: 5000,
  minRoundness: 0.2,
  dyeColour: defaultDyeColour,
  turn: null,
};
const spans = new Int32Array(plan.smallHeight * 2);
for (let r = 0; r < plan.smallHeight; r++) spans[2 * r + 1] = plan.smallWidth;

/** Pale water with some noise (seeded), and a patch of dye over it where `patch` is given. */
function scene(seed: number, patch: { x: number; y: number; r: number } | null, tint: number): Uint8Array {
  let a = seed >>> 0;
  const rand = () => {
    a = (Math.imul(a, 1664525) + 1013904223) >>> 0;
    return a / 4294967296;
  };
  const data = new Uint8Array(width * height * 3);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const p = 3 * (y * width + x);
      const inside = patch && Math.hypot(x - patch.x, y - patch.y) < patch.r;
      data[p] = Math.round((inside ? 90 : 180 + tint) + rand() * 6);
      data[p + 1] = Math.round((inside ? 60 : 182) + rand() * 6);
      data[p + 2] = Math.round((inside ? 170 : 178 - tint) + rand() * 6);
    }
  }
  return data;
}

function marked(background: Uint8Array, frame: Uint8Array, threshold = createThreshold(plan, spans, 5)) {
  const mask = new Uint8Array(plan.smallWidth * plan.smallHeight);
  const regions = threshold.run(mask, { data: frame }, background, 0.005, 0.004);
  return { mask, regions };
}

describe("the dye threshold at reduced resolution", () => {
  it("marks with the background summed once what it marks summing it in every frame, and sums a new background again", () => {
    const still = scene(1, null, 0);
    const other = scene(2, null, 30);
    const frames = [scene(3, { x: 30, y: 20, r: 7 }, 0), scene(4, { x: 60, y: 40, r: 6 }, 0)];
    const kept = createThreshold(plan, spans, 5);
    const runs = [
      [still, frames[0]!],
      [still, frames[1]!],
      [other, frames[0]!],
      [still, frames[1]!],
    ] as const;
    let marks = 0;
    for (const [background, frame] of runs) {
      const reused = marked(background, frame, kept);
      const fresh = marked(background, frame);
      expect(reused.mask).toEqual(fresh.mask);
      expect(reused.regions).toEqual(fresh.regions);
      marks += reused.mask.filter((v) => v > 0).length;
    }
    // The patches are found, and the tinted background marks differently from the still one.
    expect(marks).toBeGreaterThan(0);
    expect(marked(other, frames[0]!).mask).not.toEqual(marked(still, frames[0]!).mask);
  });
});
