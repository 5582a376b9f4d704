import { max, mean, min, sampleStandardDeviation } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { gaussian, seededRandom } from "./random";

describe("seeded random numbers", () => {
  it("draws the same sequence from the same seed and another from another", () => {
    const a = seededRandom(20261202);
    const b = seededRandom(20261202);
    const first = Array.from({ length: 5 }, a);
    expect(Array.from({ length: 5 }, b)).toEqual(first);
    expect(Array.from({ length: 5 }, seededRandom(20261203))).not.toEqual(first);
  });

  it("is uniform on [0, 1): mean 1/2 and variance 1/12 over 100 000 draws", () => {
    const random = seededRandom(7);
    const xs = Array.from({ length: 100_000 }, random);
    expect(min(xs)).toBeGreaterThanOrEqual(0);
    expect(max(xs)).toBeLessThan(1);
    // Standard error of the mean √(1/12/n) ≈ 0.0009: five of them.
    expect(Math.abs(mean(xs) - 0.5)).toBeLessThan(0.0046);
    expect(Math.abs(sampleStandardDeviation(xs) - Math.sqrt(1 / 12))).toBeLessThan(0.003);
  });

  it("gives standard normal deviates by Box–Muller (Box & Muller 1958; from memory)", () => {
    const normal = gaussian(seededRandom(11));
    const zs = Array.from({ length: 100_000 }, normal);
    expect(Math.abs(mean(zs))).toBeLessThan(0.016);
    expect(Math.abs(sampleStandardDeviation(zs) - 1)).toBeLessThan(0.012);
    // About 4.55 % beyond 2σ for a normal distribution (common practice).
    const beyond = zs.filter((z) => Math.abs(z) > 2).length / zs.length;
    expect(beyond).toBeGreaterThan(0.042);
    expect(beyond).toBeLessThan(0.049);
  });
});
