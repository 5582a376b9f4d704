import { describe, expect, it } from "vitest";
import { floatCentre, type FloatPatch } from "./float-centre";

const width = 80;
const height = 80;

/**
 * A float's face (255, saturating as the ray-traced scenes do) of radius 9 px at (cx, cy), each
 * pixel's share of it taken over 8 × 8 sub-samples, over a background `bottom(col, row)`.
 */
function render(
  cx: number,
  cy: number,
  bottom: (col: number, row: number) => number,
): { image: Uint8Array; background: Uint8Array; truth: { x: number; y: number } } {
  const image = new Uint8Array(width * height);
  const background = new Uint8Array(width * height);
  let sum = 0;
  let sumX = 0;
  let sumY = 0;
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      let inside = 0;
      for (let i = 0; i < 8; i++) {
        for (let j = 0; j < 8; j++) {
          if (Math.hypot(col - 0.5 + (i + 0.5) / 8 - cx, row - 0.5 + (j + 0.5) / 8 - cy) <= 9) inside++;
        }
      }
      const share = inside / 64;
      const b = bottom(col, row);
      background[row * width + col] = b;
      image[row * width + col] = Math.round(b + share * (255 - b));
      sum += share;
      sumX += share * col;
      sumY += share * row;
    }
  }
  return { image, background, truth: { x: sumX / sum, y: sumY / sum } };
}

function patch(image: Uint8Array, background: Uint8Array, box: [number, number, number, number]): FloatPatch {
  const spans = new Int32Array(height * 2);
  for (let row = 0; row < height; row++) spans[2 * row + 1] = width;
  return { image, background, width, spans, col0: box[0], col1: box[1], row0: box[2], row1: box[3], free: () => true, offset: 0, sigma: 2, floorSigmas: 3 };
}

/** The old rise-weighted centroid over the same box, for comparison. */
function riseCentroid(image: Uint8Array, background: Uint8Array, box: [number, number, number, number], floor: number): { x: number; y: number } {
  let sum = 0;
  let sumX = 0;
  let sumY = 0;
  for (let row = box[2]; row < box[3]; row++) {
    for (let col = box[0]; col < box[1]; col++) {
      const w = image[row * width + col]! - background[row * width + col]! - floor;
      if (w <= 0) continue;
      sum += w;
      sumX += w * col;
      sumY += w * row;
    }
  }
  return { x: sumX / sum, y: sumY / sum };
}

describe("a float's centre on clutter", () => {
  it("stays on the float crossing a dark grid line, where the rise-weighted centroid is pulled onto the line", () => {
    // A dark line 2 px wide at columns 44–45 under a float centred at (40.3, 39.6): bottom 200, line 110.
    const { image, background, truth } = render(40.3, 39.6, (col) => (col === 44 || col === 45 ? 110 : 200));
    const box: [number, number, number, number] = [28, 53, 27, 52];
    const found = floatCentre(patch(image, background, box))!;
    expect(Math.abs(found.x - truth.x)).toBeLessThanOrEqual(0.02);
    expect(Math.abs(found.y - truth.y)).toBeLessThanOrEqual(0.02);
    const old = riseCentroid(image, background, box, 6);
    expect(old.x - truth.x).toBeGreaterThan(0.5);
  });

  it("gives the shadow beside the float no weight: it is darker than the bottom", () => {
    const { image, background, truth } = render(40, 40, () => 200);
    // The float's shadow, 60 grey levels dark, in the frame only (the background does not hold it).
    for (let row = 44; row < 60; row++) for (let col = 50; col < 62; col++) image[row * width + col] = 140;
    const found = floatCentre(patch(image, background, [28, 62, 28, 60]))!;
    expect(Math.hypot(found.x - truth.x, found.y - truth.y)).toBeLessThanOrEqual(0.02);
  });

  it("leaves out the pixels where a saturated glare is nearly as bright as the face, and says how many", () => {
    // Glare: the background is 252 (almost the face) right of column 42; the float's right edge lies in it.
    const { image, background } = render(38.4, 40.2, (col) => (col > 42 ? 252 : 200));
    const found = floatCentre(patch(image, background, [27, 50, 29, 52]))!;
    expect(found.unknown).toBeGreaterThan(0);
    // Only the visible part counts: its centroid, the glare's rise (3 grey levels over 252) weighing nothing.
    const visible = render(38.4, 40.2, () => 200);
    const cut = new Uint8Array(visible.image);
    for (let row = 0; row < height; row++) for (let col = 43; col < width; col++) cut[row * width + col] = 200;
    const expected = floatCentre(patch(cut, visible.background, [27, 50, 29, 52]))!;
    expect(found.x).toBeCloseTo(expected.x, 6);
    expect(found.y).toBeCloseTo(expected.y, 6);
  });
});
