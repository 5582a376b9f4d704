/**
 * The dye threshold at reduced resolution keeps the colour background's block sums from one frame
 * to the next: what it marks must be what a fresh threshold marks, for the same background and for
 * a new one. A windowed search that meets a find near its edge widens round it instead of giving
 * the frame up, and then finds there what the whole search finds.
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

describe("a windowed dye search beside a dark still mark", () => {
  const side = 320;

  /** An untilted full-resolution dye plan over a `wide` × 320 px frame, the tank covering it all. */
  function fullPlan(wide: number): { plan: DetectionPlan; spans: Int32Array } {
    const spans = new Int32Array(side * 2);
    for (let r = 0; r < side; r++) spans[2 * r + 1] = wide;
    const crop = { left: 0, top: 0, width: wide, height: side };
    return { plan: { ...plan, frameWidth: wide, frameHeight: side, crop, shrink: 1, smallWidth: wide, smallHeight: side }, spans };
  }

  /** Exact images: pale water, and on the frame discs of the given colours (a dye patch, a dark brownish mark). */
  function image(wide: number, discs: { x: number; y: number; r: number; rgb: readonly [number, number, number] }[]): Uint8Array {
    const data = new Uint8Array(wide * side * 3);
    for (let y = 0; y < side; y++) {
      for (let x = 0; x < wide; x++) {
        const disc = discs.find((d) => Math.hypot(x - d.x, y - d.y) < d.r);
        data.set(disc ? disc.rgb : [180, 182, 178], 3 * (y * wide + x));
      }
    }
    return data;
  }
  const patch = { x: 160, y: 160, r: 6, rgb: [90, 60, 170] as const };
  const mark = [60, 52, 50] as const;

  function search(wide: number, frame: Uint8Array, windowed: boolean) {
    const full = fullPlan(wide);
    const threshold = createThreshold(full.plan, full.spans, 5);
    const mask = new Uint8Array(wide * side);
    const tiles = windowed ? threshold.windowTiles([{ x: 160, y: 160, reach: 20 }]) : undefined;
    const regions = threshold.run(mask, { data: frame }, image(wide, []), 0.005, 0.004, tiles);
    return { mask, regions };
  }

  it("finds the patch and the mark two tiles off the window's edge as the whole search does, instead of giving up", () => {
    // The window's tiles run from column 2 to 7 (32 px tiles, two of margin); the mark lies in column 2.
    const frame = image(side, [patch, { x: 80, y: 160, r: 8, rgb: mark }]);
    const whole = search(side, frame, false);
    expect(whole.regions).toHaveLength(2);
    const windowed = search(side, frame, true);
    expect(windowed.regions).toEqual(whole.regions);
    expect(windowed.mask).toEqual(whole.mask);
  });

  it("marks, after one and after two widenings, frame after frame, what the whole search marks", () => {
    // A widening round takes the marks of the tiles the round before searched from that round:
    // they must be this frame's, whatever the frames before left. The second frame's line runs on
    // two tiles past the first widening, so it widens twice; the third needs no widening.
    const noisy = (discs: Parameters<typeof image>[1], seed: number) => {
      const data = image(side, discs);
      for (let i = 0, a = seed; i < data.length; i++) {
        a = (Math.imul(a, 1664525) + 1013904223) >>> 0;
        data[i] = Math.max(0, Math.min(255, data[i]! + (a >>> 29) - 4));
      }
      return data;
    };
    const frames = [
      noisy([patch, { x: 80, y: 160, r: 8, rgb: mark }], 1),
      noisy([patch, ...Array.from({ length: 6 }, (_, i) => ({ x: 80 - 8 * i, y: 150, r: 5, rgb: mark }))], 2),
      noisy([patch], 3),
    ];
    const full = fullPlan(side);
    const kept = createThreshold(full.plan, full.spans, 5);
    const background = image(side, []);
    for (const frame of frames) {
      const mask = new Uint8Array(side * side);
      const regions = kept.run(mask, { data: frame }, background, 0.005, 0.004, kept.windowTiles([{ x: 160, y: 160, reach: 20 }]));
      const whole = search(side, frame, false);
      expect(regions).toEqual(whole.regions);
      expect(mask).toEqual(whole.mask);
    }
  });

  it("gives a float's windowed search up at once when a find lies near the windows' edge", () => {
    // Floats do not widen: such a search comes back null for the whole search, as before.
    const { plan: dyePlan, spans: floatSpans } = fullPlan(side);
    const floatPlan: DetectionPlan = { ...dyePlan, tracer: "float", channels: 1 };
    const threshold = createThreshold(floatPlan, floatSpans, 5);
    const background = new Uint8Array(side * side).fill(40);
    const frame = background.slice();
    for (const [cx, cy] of [
      [160, 160],
      [80, 160],
    ] as const) {
      for (let y = cy - 5; y <= cy + 5; y++) for (let x = cx - 5; x <= cx + 5; x++) frame[y * side + x] = 200;
    }
    const mask = new Uint8Array(side * side);
    const windowed = threshold.run(mask, { data: frame }, background, 0, 2, threshold.windowTiles([{ x: 160, y: 160, reach: 20 }]));
    expect(windowed).toBeNull();
    expect(threshold.run(mask, { data: frame }, background, 0, 2)).toHaveLength(2);
  });

  it("makes the background's products for the tiles it searches, and anew for a new background, as a fresh threshold does", () => {
    // The products are made piece by piece as a search reads them (dye-marks.ts): a window elsewhere
    // under the same background reads pieces not made yet, and a new background array (as a frame's
    // composed background is) must not be read through the pieces made for the one before.
    const markDisc = { x: 80, y: 160, r: 8, rgb: mark };
    const still = image(side, []);
    const holdingMark = image(side, [markDisc]);
    const withMark = image(side, [patch, markDisc]);
    const elsewhere = image(side, [{ ...patch, x: 250, y: 60 }]);
    const full = fullPlan(side);
    const kept = createThreshold(full.plan, full.spans, 5);
    const runs = [
      { background: still, frame: withMark, at: patch, regions: 2 },
      { background: still, frame: elsewhere, at: { x: 250, y: 60 }, regions: 1 },
      { background: holdingMark, frame: withMark, at: patch, regions: 1 },
      { background: still, frame: withMark, at: patch, regions: 2 },
    ];
    for (const { background, frame, at, regions } of runs) {
      const windows = [{ x: at.x, y: at.y, reach: 20 }];
      const mask = new Uint8Array(side * side);
      const found = kept.run(mask, { data: frame }, background, 0.005, 0.004, kept.windowTiles(windows));
      const fresh = createThreshold(full.plan, full.spans, 5);
      const freshMask = new Uint8Array(side * side);
      expect(found).toEqual(fresh.run(freshMask, { data: frame }, background, 0.005, 0.004, fresh.windowTiles(windows)));
      expect(mask).toEqual(freshMask);
      expect(found).toHaveLength(regions);
    }
  });

  it("gives the frame up to the whole search when what lies at the edge runs on past three widenings", () => {
    // A dark line across 20 tiles: each widening reaches two tiles further along it.
    const wide = 640;
    const line = Array.from({ length: 80 }, (_, i) => ({ x: 4 + 8 * i, y: 160, r: 5, rgb: mark }));
    const frame = image(wide, [patch, ...line]);
    expect(search(wide, frame, true).regions).toBeNull();
    expect(search(wide, frame, false).regions).toHaveLength(1);
  });
});
