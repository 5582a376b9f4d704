import { describe, expect, it } from "vitest";
import { ringMedians, type TurningBackground } from "./turning-background";
import { backgroundAt, composeGeometry, roundHalfUp } from "./turning-compose";

describe("rounding without Math.round", () => {
  it("agrees with Math.round at halves, just below them and across the 8-bit range", () => {
    const edges = [0, 0.5, 0.49999999999999994, 1.4999999999999998, 2.5, 127.49999999999999, 127.5, 254.49999999999997, 254.5, 255];
    for (const v of edges) expect(roundHalfUp(v), String(v)).toBe(Math.round(v));
    let seed = 7;
    for (let i = 0; i < 100_000; i++) {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      const v = (seed / 2147483648) * 256;
      expect(roundHalfUp(v)).toBe(Math.round(v));
    }
  });
});

describe("a frame's background composed from geometry made once", () => {
  for (const channels of [1, 3]) {
    it(`gives the same bytes as working it out each time (${channels} channel${channels === 1 ? "" : "s"})`, () => {
      const size = 64;
      const n = size * size * channels;
      const still = new Uint8Array(n);
      const turning = new Uint8Array(n);
      const frame = new Uint8Array(n);
      for (let i = 0; i < n; i++) {
        still[i] = 60 + ((i * 7919) % 170);
        turning[i] = 40 + ((i * 104729) % 200);
      }
      const turn = { cx: 31.7, cy: 32.2, r: 29, rate: 1 };
      const pixels: number[] = [];
      for (let row = 0; row < size; row++) {
        for (let col = 0; col < size; col++) if ((col - turn.cx) ** 2 + (row - turn.cy) ** 2 <= turn.r ** 2) pixels.push(row * size + col);
      }
      const model: TurningBackground = { turn, turning, rings: ringMedians(turning, size, turn, channels), pixels: Int32Array.from(pixels) };
      const geometry = composeGeometry(model, size, channels);
      for (const angle of [0, 0.3, -1.2, 2.9]) {
        const fresh = new Uint8Array(n);
        const kept = new Uint8Array(n);
        backgroundAt(still, model, frame, size, size, angle, fresh);
        backgroundAt(still, model, frame, size, size, angle, kept, geometry);
        expect(kept).toEqual(fresh);
        // The turning part takes part: the composed background differs from the still one inside the disc.
        expect(fresh).not.toEqual(still);
      }
    });
  }
});
