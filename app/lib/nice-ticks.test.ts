import { describe, expect, it } from "vitest";
import { niceScale, niceStep, niceTicks } from "./nice-ticks";

describe("niceStep", () => {
  it("picks 1, 2 or 5 × 10ⁿ at least as wide as span / count", () => {
    expect(niceStep(3, 6)).toBe(0.5);
    expect(niceStep(2.9, 6)).toBe(0.5);
    expect(niceStep(10, 6)).toBe(2);
    expect(niceStep(0.07, 6)).toBe(0.02);
    expect(niceStep(600, 6)).toBe(100);
    expect(niceStep(25, 5)).toBe(5);
  });

  it("answers 1 for a span that is not a positive number", () => {
    expect(niceStep(0)).toBe(1);
    expect(niceStep(Number.NaN)).toBe(1);
    expect(niceStep(-4)).toBe(1);
  });
});

describe("niceTicks", () => {
  it("ticks a time axis at half seconds, not at the data's own odd values", () => {
    // The residual plot of a demo run ran from 0.433 s to 2.983 s and was ticked there.
    expect(niceTicks([0.433, 2.983])).toEqual([0.5, 1, 1.5, 2, 2.5]);
  });

  it("includes ends that fall on a tick and writes multiples without binary noise", () => {
    expect(niceTicks([0, 0.6], 6)).toEqual([0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6]);
    expect(niceTicks([-0.3, 0.3], 6)).toEqual([-0.3, -0.2, -0.1, 0, 0.1, 0.2, 0.3]);
  });

  it("keeps the domain as given for equal-aspect plots", () => {
    const ticks = niceTicks([-13.7, 12.1]);
    expect(ticks).toEqual([-10, -5, 0, 5, 10]);
    expect(Object.is(ticks[2], -0)).toBe(false);
  });

  it("gives the one value for an empty span and nothing for a domain that is not finite", () => {
    expect(niceTicks([2, 2])).toEqual([2]);
    expect(niceTicks([Number.NaN, 1])).toEqual([]);
  });
});

describe("niceScale", () => {
  it("widens the data's range to round ends and ticks it", () => {
    expect(niceScale([0.12, 1.7, 2.93])).toEqual({ domain: [0, 3], ticks: [0, 0.5, 1, 1.5, 2, 2.5, 3] });
  });

  it("handles negative data and ignores values that are not finite", () => {
    expect(niceScale([-4.2, Number.NaN, 3.9, Number.POSITIVE_INFINITY])).toEqual({ domain: [-6, 4], ticks: [-6, -4, -2, 0, 2, 4] });
  });

  it("gives a single value room around it, and no data a unit domain", () => {
    expect(niceScale([5]).domain[0]).toBeLessThan(5);
    expect(niceScale([5]).domain[1]).toBeGreaterThan(5);
    expect(niceScale([])).toEqual({ domain: [0, 1], ticks: [0, 0.2, 0.4, 0.6, 0.8, 1] });
  });
});
