import { describe, expect, it } from "vitest";
import { describeFrames, framesWithoutTracer, nextIn, pointAt, toRanges, trackSoFar, tracksPerFrame, type ReviewTrack } from "./frame-review";

const a: ReviewTrack = {
  number: 1,
  points: [
    [0, 10, 10],
    [1, 11, 10],
    [3, 13, 10],
  ],
};
const b: ReviewTrack = {
  number: 2,
  points: [
    [3, 50, 50],
    [4, 51, 50],
  ],
};

describe("frame review", () => {
  it("names the tracks found in each frame and the frames where none was", () => {
    expect(tracksPerFrame(7, [a, b])).toEqual([[1], [1], [], [1, 2], [2], [], []]);
    expect(framesWithoutTracer(7, [a, b])).toEqual([2, 5, 6]);
    expect(framesWithoutTracer(3, [])).toEqual([0, 1, 2]);
  });

  it("draws a track only up to the frame shown, and its point there when it has one", () => {
    expect(trackSoFar(a, 2)).toEqual([
      [0, 10, 10],
      [1, 11, 10],
    ]);
    expect(trackSoFar(b, 2)).toEqual([]);
    expect(pointAt(a, 3)).toEqual({ x: 13, y: 10 });
    expect(pointAt(a, 2)).toBeNull();
  });

  it("writes frames as 1-based ranges", () => {
    expect(toRanges([2, 3, 4, 9])).toEqual([
      [2, 4],
      [9, 9],
    ]);
    expect(describeFrames([2, 5, 6, 7])).toBe("3, 6–8");
    expect(describeFrames([])).toBe("");
  });

  it("finds the next and previous frame of a list", () => {
    expect(nextIn([2, 5, 6], 2, 1)).toBe(5);
    expect(nextIn([2, 5, 6], 6, 1)).toBeNull();
    expect(nextIn([2, 5, 6], 5, -1)).toBe(2);
    expect(nextIn([2, 5, 6], 2, -1)).toBeNull();
  });
});
