import { describe, expect, it } from "vitest";
import { gaussian, seededRandom } from "../random";
import { createDyeCentre } from "./dye-centre";
import { findShadowCopies } from "./dye-shadow";

const width = 140;
const height = 110;
const spans = new Int32Array(height * 2);
for (let row = 0; row < height; row++) spans[2 * row + 1] = width;

const angle = 0.4;
const along = [Math.cos(angle), Math.sin(angle)] as const;
const dye = [200, 30, 60];

/** The patch's share of the light at (col, row): an elongated Gaussian, 7 × 3 px, centred at (cx, cy). */
function share(col: number, row: number, cx: number, cy: number): number {
  const u = (col - cx) * along[0] + (row - cy) * along[1];
  const v = -(col - cx) * along[1] + (row - cy) * along[0];
  return 0.6 * Math.exp(-0.5 * ((u / 7) ** 2 + (v / 3) ** 2));
}

/** White glare on the water, still in the view (the background holds it too): a Gaussian of this peak and σ, in grey levels and px. */
interface Glare {
  x: number;
  y: number;
  peak: number;
  sigma: number;
}

/**
 * A grey bottom under an uneven light, a red patch seen through and, when `copy` is given, its
 * coloured shadow: the light through the patch, a share `copy.share` of all the light, falling on
 * the bottom displaced by (copy.dx, copy.dy). Each channel of a pixel is the light times what the
 * patch lets through on the way up times what the shadow leaves on the bottom (exact, no noise
 * unless `seed` is given). `glare` adds white light on top, in the frame and its background alike,
 * both clipped at 255.
 */
function scene(cx: number, cy: number, copy: { dx: number; dy: number; share: number } | null, seed?: number, glare?: Glare) {
  const background = new Uint8Array(width * height * 3);
  const image = new Uint8Array(width * height * 3);
  const noise = seed === undefined ? () => 0 : gaussian(seededRandom(seed));
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const q = 3 * (row * width + col);
      const light = 120 + (40 * col) / width;
      const seen = share(col, row, cx, cy);
      const shaded = copy ? share(col - copy.dx, row - copy.dy, cx, cy) : 0;
      const white = glare ? glare.peak * Math.exp(-((col - glare.x) ** 2 + (row - glare.y) ** 2) / (2 * glare.sigma ** 2)) : 0;
      for (let c = 0; c < 3; c++) {
        const through = (s: number) => 1 - s + (dye[c]! * s) / 160;
        const shadow = copy ? 1 - copy.share * (1 - through(shaded)) : 1;
        background[q + c] = Math.min(255, Math.round(light + white));
        image[q + c] = Math.max(0, Math.min(255, Math.round(light * through(seen) * shadow + white + 3 * noise())));
      }
    }
  }
  return { image, background };
}

const box = (cx: number, cy: number) => ({ col0: Math.round(cx) - 12, row0: Math.round(cy) - 7, col1: Math.round(cx) + 12, row1: Math.round(cy) + 7 });

describe("a dye patch's coloured shadow", () => {
  it("is taken out when it overlaps the patch's tail, so the centre stays on the patch (exact images)", () => {
    const cx = 55.3;
    const cy = 48.6;
    // A small lamp's sharp shadow 24 px away, nearly along the patch's long axis (as a second
    // lamp's shadow lies on the ray-traced dye scenes' first frames), a fifth of the light.
    const copy = { dx: 24 * Math.cos(angle + 0.15), dy: 24 * Math.sin(angle + 0.15), share: 0.2 };
    const { image, background } = scene(cx, cy, copy);
    const found = createDyeCentre(width, height, spans)({ data: image, width, height }, background, box(cx, cy));
    expect(found).not.toBeNull();
    const off = Math.hypot(found!.x - cx, found!.y - cy);
    console.log(`dye with its shadow over its tail: ${off.toFixed(3)} px off`);
    expect(off).toBeLessThan(0.05);
  });

  it("is not pulled towards a glare that clips the other end of the patch: a clipped pixel's mirror image reads the signal with the copy taken out (exact image)", () => {
    const cx = 55.3;
    const cy = 48.6;
    const copy = { dx: 24 * Math.cos(angle + 0.15), dy: 24 * Math.sin(angle + 0.15), share: 0.2 };
    // Still glare on the long axis 11 px from the centre, on the side away from the copy.
    const glare = { x: cx - 11 * along[0], y: cy - 11 * along[1], peak: 160, sigma: 4 };
    const { image, background } = scene(cx, cy, copy, undefined, glare);
    let clipped = 0;
    for (let p = 0; p < width * height; p++) if (image[3 * p]! >= 250 || image[3 * p + 1]! >= 250 || image[3 * p + 2]! >= 250) clipped++;
    const found = createDyeCentre(width, height, spans)({ data: image, width, height }, background, box(cx, cy));
    expect(found).not.toBeNull();
    const off = Math.hypot(found!.x - cx, found!.y - cy);
    console.log(`dye with its shadow over its tail and ${clipped} clipped pixels at the other end: ${off.toFixed(3)} px off`);
    expect(clipped).toBeGreaterThan(10);
    expect(off).toBeLessThan(0.05);
  });

  it("leaves a patch without a shadow where it was (exact image and noisy ones)", () => {
    const cx = 60.7;
    const cy = 52.2;
    const { image, background } = scene(cx, cy, null);
    const found = createDyeCentre(width, height, spans)({ data: image, width, height }, background, box(cx, cy));
    expect(Math.hypot(found!.x - cx, found!.y - cy)).toBeLessThan(0.01);
    for (let seed = 1; seed <= 4; seed++) {
      const noisy = scene(cx, cy, null, seed);
      const measured = createDyeCentre(width, height, spans)({ data: noisy.image, width, height }, noisy.background, box(cx, cy));
      expect(Math.hypot(measured!.x - cx, measured!.y - cy)).toBeLessThan(0.3);
    }
  });

  it("finds the copy's displacement and share from the signal, and none beside a lone patch", () => {
    const cx = 55;
    const cy = 50;
    const value = (image: Uint8Array, background: Uint8Array) => (p: number) => {
      // The change of red against green over the background's, a stand-in for the centre's signal.
      const q = 3 * p;
      return (image[q]! - background[q]!) / background[q]! - (image[q + 1]! - background[q + 1]!) / background[q + 1]!;
    };
    const shape = [49 * along[0] ** 2 + 9 * along[1] ** 2, 40 * along[0] * along[1], 49 * along[1] ** 2 + 9 * along[0] ** 2] as const;
    const shadowed = scene(cx, cy, { dx: -20, dy: 22, share: 0.3 });
    const copies = findShadowCopies({ width, height, spans, value: value(shadowed.image, shadowed.background), x: cx, y: cy, shape, noise: 0.002 });
    expect(copies).toHaveLength(1);
    expect(Math.abs(copies[0]!.dx + 20)).toBeLessThan(0.5);
    expect(Math.abs(copies[0]!.dy - 22)).toBeLessThan(0.5);
    expect(Math.abs(copies[0]!.share - 0.3)).toBeLessThan(0.05);
    const lone = scene(cx, cy, null);
    expect(findShadowCopies({ width, height, spans, value: value(lone.image, lone.background), x: cx, y: cy, shape, noise: 0.002 })).toEqual([]);
  });
});
