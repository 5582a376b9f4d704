import { describe, expect, it } from "vitest";
import { createPixelMarker } from "./float-marks";

/** A small deterministic generator, so a failure can be replayed. */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

function marksOneByOne(img: Uint8Array, bg: Uint8Array, from: number, to: number, level: number): Uint8Array {
  const m = new Uint8Array(img.length);
  for (let p = from; p < to; p++) if (img[p]! - bg[p]! > level) m[p] = 255;
  return m;
}

describe("a float's marks four pixels at a time", () => {
  it("marks exactly the pixels brighter than the background by more than the level, whatever the level, range and alignment", () => {
    const random = lcg(7);
    const n = 4096;
    // Aligned arrays, and arrays starting one to three bytes into their buffer (judged one by one).
    for (const shift of [0, 1, 2, 3]) {
      const imgBuffer = new Uint8Array(n + 8);
      const bgBuffer = new Uint8Array(n + 8);
      const img = imgBuffer.subarray(shift, shift + n);
      const bg = bgBuffer.subarray(shift === 2 ? 0 : shift, (shift === 2 ? 0 : shift) + n);
      for (let p = 0; p < n; p++) {
        const base = Math.floor(random() * 256);
        bg[p] = base;
        // Mostly water near the background, some pixels far above or below it, the extremes included.
        const r = random();
        img[p] = r < 0.05 ? 255 : r < 0.1 ? 0 : Math.max(0, Math.min(255, base + Math.round((random() - 0.45) * 40)));
      }
      for (const level of [-300, -3.5, 0, 0.2, 1, 4.99, 5, 7.7, 20, 254, 254.5, 255, 400]) {
        for (const [from, to] of [
          [0, n],
          [1, n - 1],
          [3, 9],
          [5, 6],
          [17, 4000],
          [2048, 2048],
        ] as const) {
          const m = new Uint8Array(n);
          const first = createPixelMarker().mark(img, bg, m, from, to, level);
          const expected = marksOneByOne(img, bg, from, to, level);
          expect(m).toEqual(expected);
          const firstExpected = expected.indexOf(255);
          if (firstExpected < 0) expect(first).toBe(-1);
          else expect(first).toBeLessThanOrEqual(firstExpected);
          if (firstExpected >= 0) expect(first).toBeGreaterThanOrEqual(from);
        }
      }
    }
  });

  it("sees a new frame given in a new array, not the words of the last one", () => {
    const marker = createPixelMarker();
    const bg = new Uint8Array(64).fill(100);
    const first = new Uint8Array(64).fill(100);
    const second = new Uint8Array(64).fill(100);
    second[33] = 150;
    const m = new Uint8Array(64);
    expect(marker.mark(first, bg, m, 0, 64, 10)).toBe(-1);
    expect(marker.mark(second, bg, m, 0, 64, 10)).toBeGreaterThanOrEqual(0);
    expect(m[33]).toBe(255);
    expect(m.reduce((sum, v) => sum + (v ? 1 : 0), 0)).toBe(1);
  });
});
