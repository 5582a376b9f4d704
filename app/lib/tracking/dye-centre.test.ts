import { describe, expect, it } from "vitest";
import { gaussian, seededRandom } from "../random";
import { createDyeCentre } from "./dye-centre";

const width = 96;
const height = 80;
const spans = new Int32Array(height * 2);
for (let row = 0; row < height; row++) spans[2 * row + 1] = width;

/** A grey, unevenly lit background and a frame of it with a red elongated patch and noise. */
function scene(cx: number, cy: number, seed: number): { image: Uint8Array; background: Uint8Array } {
  const background = new Uint8Array(width * height * 3);
  const image = new Uint8Array(width * height * 3);
  const noise = gaussian(seededRandom(seed));
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const q = 3 * (row * width + col);
      const light = 120 + (40 * col) / width;
      const u = (col - cx) * Math.cos(0.4) + (row - cy) * Math.sin(0.4);
      const v = -(col - cx) * Math.sin(0.4) + (row - cy) * Math.cos(0.4);
      const share = 0.6 * Math.exp(-0.5 * ((u / 7) ** 2 + (v / 3) ** 2));
      const dye = [200, 30, 60];
      for (let c = 0; c < 3; c++) {
        background[q + c] = Math.round(light);
        const value = light * (1 - share) + (dye[c]! * light * share) / 160 + 5 * noise();
        image[q + c] = Math.max(0, Math.min(255, Math.round(value)));
      }
    }
  }
  return { image, background };
}

describe("the dye patch centre", () => {
  it("gives each frame the same centre with one measurer for many frames as with a new one for each", () => {
    const frames = [scene(40.3, 35.6, 1), scene(55.8, 44.1, 2), scene(40.3, 35.6, 3)];
    const box = (cx: number, cy: number) => ({ col0: Math.round(cx) - 10, row0: Math.round(cy) - 6, col1: Math.round(cx) + 10, row1: Math.round(cy) + 6 });
    const boxes = [box(40.3, 35.6), box(55.8, 44.1), box(40.3, 35.6)];
    const shared = createDyeCentre(width, height, spans);
    const reused = frames.map((f, i) => shared({ data: f.image, width, height }, f.background, boxes[i]!));
    const fresh = frames.map((f, i) => createDyeCentre(width, height, spans)({ data: f.image, width, height }, f.background, boxes[i]!));
    expect(reused.every((r) => r !== null)).toBe(true);
    expect(reused).toEqual(fresh);
    // The same place under other noise is measured anew, not taken from the first frame.
    expect(reused[2]!.x).not.toBe(reused[0]!.x);
    expect(Math.hypot(reused[1]!.x - 55.8, reused[1]!.y - 44.1)).toBeLessThan(0.5);
  });
});
