/**
 * The threshold's row marking from a background's products must decide every pixel as
 * relativeChangeAbove does, black and clipped channels included.
 */
import { describe, expect, it } from "vitest";
import { seededRandom } from "../random";
import { backgroundProducts, markChangeAbove, relativeChangeAbove } from "./dye-signal";

describe("marking a row from the background's products", () => {
  it("marks exactly the pixels relativeChangeAbove passes, at levels from 0.02 to 0.5", () => {
    const random = seededRandom(16);
    const pixels = 20_000;
    // Channels anywhere in 0–255, with many at 0, 1 and 255 and many pixels equal to or near their background.
    const level = () => {
      const u = random();
      return u < 0.05 ? 0 : u < 0.1 ? 1 : u < 0.15 ? 255 : Math.floor(random() * 256);
    };
    const background = Uint8Array.from({ length: 3 * pixels }, level);
    const image = background.map((b) => (random() < 0.3 ? b : Math.max(0, Math.min(255, b + Math.round((random() - 0.5) * 60)))));
    const products = new Uint16Array(3 * pixels);
    backgroundProducts(background, products);
    let marked = 0;
    for (const at of [0.02, 0.05, 0.09, 0.2, 0.5]) {
      const mask = new Uint8Array(pixels);
      const count = markChangeAbove(image, products, mask, 0, pixels, at);
      const expected = Uint8Array.from({ length: pixels }, (_, p) =>
        relativeChangeAbove(image[3 * p]!, image[3 * p + 1]!, image[3 * p + 2]!, background[3 * p]!, background[3 * p + 1]!, background[3 * p + 2]!, at)
          ? 255
          : 0,
      );
      expect(mask).toEqual(expected);
      expect(count).toBe(expected.filter((v) => v > 0).length);
      marked += count;
    }
    expect(marked).toBeGreaterThan(1000);
  });

  it("holds every product exactly in 16 bits, the largest (255 · 255) included", () => {
    const background = Uint8Array.from([255, 255, 255, 0, 1, 255, 254, 255, 253]);
    const products = new Uint16Array(9);
    backgroundProducts(background, products);
    expect(Array.from(products)).toEqual([65025, 65025, 65025, 255, 255, 1, 64515, 64262, 64770]);
  });
});
