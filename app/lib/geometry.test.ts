import { describe, expect, it } from "vitest";
import { circleThroughThreePoints } from "./geometry";

describe("circle through three rim points", () => {
  it("recovers a known circle from three points on it", () => {
    const cx = 640.25;
    const cy = 359.5;
    const r = 301.75;
    const at = (deg: number) => ({ x: cx + r * Math.cos((deg * Math.PI) / 180), y: cy + r * Math.sin((deg * Math.PI) / 180) });
    const c = circleThroughThreePoints(at(10), at(130), at(250));
    expect(c).not.toBeNull();
    expect(c!.cx).toBeCloseTo(cx, 9);
    expect(c!.cy).toBeCloseTo(cy, 9);
    expect(c!.r).toBeCloseTo(r, 9);
  });

  it("refuses three points in a line", () => {
    expect(circleThroughThreePoints({ x: 0, y: 0 }, { x: 1, y: 1 }, { x: 5, y: 5 })).toBeNull();
  });
});
