import { describe, expect, it } from "vitest";
import { fitDisc } from "./disc-fit";
import { floatCentre } from "./float-centre";

const width = 90;
const height = 90;
const radius = 10.8;

/**
 * A float's face (255, saturated) of radius 10.8 px at (cx, cy), each pixel's share of it taken
 * over 16 × 16 sub-samples, over `bottom(col, row)`; the face hides what is under it.
 */
function render(cx: number, cy: number, bottom: (col: number, row: number) => number): { image: Uint8Array; background: Uint8Array } {
  const image = new Uint8Array(width * height);
  const background = new Uint8Array(width * height);
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      let inside = 0;
      for (let i = 0; i < 16; i++) {
        for (let j = 0; j < 16; j++) {
          if (Math.hypot(col - 0.5 + (i + 0.5) / 16 - cx, row - 0.5 + (j + 0.5) / 16 - cy) <= radius) inside++;
        }
      }
      const b = bottom(col, row);
      background[row * width + col] = b;
      image[row * width + col] = Math.round(b + (inside / 256) * (255 - b));
    }
  }
  return { image, background };
}

/** Saturated glare (255) right of the line x = edge, grey water (120) left of it. */
const glareFrom = (edge: number) => (col: number) => (col >= edge ? 255 : 120);

/** The share-of-pixel centroid (float-centre.ts) over a box round the disc, with nothing else in it. */
function shareCentroid(image: Uint8Array, background: Uint8Array, cx: number, cy: number) {
  const spans = new Int32Array(height * 2);
  for (let row = 0; row < height; row++) spans[2 * row + 1] = width;
  return floatCentre({
    image,
    background,
    width,
    spans,
    col0: Math.floor(cx - 14),
    col1: Math.ceil(cx + 14),
    row0: Math.floor(cy - 14),
    row1: Math.ceil(cy + 14),
    free: () => true,
    offset: 0,
    sigma: 1,
    floorSigmas: 3,
  });
}

describe("a float's disc fitted where glare hides part of it", () => {
  it("finds the centre of a disc half hidden in saturated glare within 0.05 px, where the share centroid is pixels off", () => {
    for (const [cx, cy] of [
      [45.3, 44.6],
      [44.71, 45.18],
      [45.05, 44.92],
    ] as const) {
      const { image, background } = render(cx, cy, glareFrom(Math.round(cx)));
      const fit = fitDisc({ image, background, width, height, x: cx - 2.4, y: cy + 1.7, radius, face: 255, reach: 4 });
      expect(fit).not.toBeNull();
      expect(Math.abs(fit!.x - cx)).toBeLessThan(0.05);
      expect(Math.abs(fit!.y - cy)).toBeLessThan(0.05);
      expect(Math.max(fit!.sdX, fit!.sdY)).toBeLessThan(0.1);
      // The centroid of the visible half lies about 4R/3π = 4.6 px towards the water.
      const old = shareCentroid(image, background, cx, cy);
      expect(old).not.toBeNull();
      expect(cx - old!.x).toBeGreaterThan(3);
    }
  });

  it("measures the radius and face on a clear frame, and the centre within 0.05 px", () => {
    const { image, background } = render(40.37, 47.81, (col, row) => (Math.abs(row - 50) < 1 || Math.abs(col - 36) < 1 ? 60 : 130));
    const fit = fitDisc({ image, background, width, height, x: 41, y: 47, radius: 8, face: 240, reach: 2, fitRadius: true });
    expect(fit).not.toBeNull();
    expect(Math.abs(fit!.x - 40.37)).toBeLessThan(0.05);
    expect(Math.abs(fit!.y - 47.81)).toBeLessThan(0.05);
    expect(Math.abs(fit!.radius - radius)).toBeLessThan(0.1);
    expect(Math.abs(fit!.face - 255)).toBeLessThan(3);
  });

  it("reads a shadow darker than the water as the water itself", () => {
    const cx = 45.2;
    const cy = 44.4;
    const { image, background } = render(cx, cy, glareFrom(46));
    // The float's shadow: a crescent below and left of it, 60 grey levels darker than the water.
    for (let row = 0; row < height; row++) {
      for (let col = 0; col < width; col++) {
        const inShadow = Math.hypot(col - cx + 3, row - cy - 3) <= radius && Math.hypot(col - cx, row - cy) > radius + 0.7;
        if (inShadow && col < 46) image[row * width + col] = background[row * width + col]! - 60;
      }
    }
    const fit = fitDisc({ image, background, width, height, x: cx + 1, y: cy - 1, radius, face: 255, reach: 4 });
    expect(fit).not.toBeNull();
    expect(Math.hypot(fit!.x - cx, fit!.y - cy)).toBeLessThan(0.05);
  });

  it("gives a large uncertainty where the whole disc lies in glare as bright as its face", () => {
    const { image, background } = render(45, 45, () => 255);
    const fit = fitDisc({ image, background, width, height, x: 45, y: 45, radius, face: 255, reach: 4 });
    // Nothing in the frame moves with the centre: no fit, or one that says it knows nothing.
    if (fit) expect(Math.max(fit.sdX, fit.sdY)).toBeGreaterThan(1);
  });
});
