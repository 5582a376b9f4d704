import { describe, expect, it } from "vitest";
import { measureOmegaFromMark, rateFit } from "./rate-from-footage";
import { linearFit } from "./regression";
import { gaussian, seededRandom } from "../random";

describe("Ω measured from a mark on the table (lab-fixed camera)", () => {
  const centre = { x: 640, y: 360 };
  const mark = (omega: number, mirrored: boolean, noise: number) => {
    const normal = gaussian(seededRandom(5));
    return Array.from({ length: 240 }, (_, i) => {
      const t = 4 + i / 30;
      const a = 0.3 + omega * (t - 4);
      const x = 250 * Math.cos(a);
      return { t, x: centre.x + (mirrored ? -x : x) + noise * normal(), y: centre.y - 250 * Math.sin(a) + noise * normal() };
    });
  };

  it("reads the signed rate from the unwrapped angle about the centre", () => {
    const ccw = measureOmegaFromMark(mark(1.047, false, 0.3), centre);
    expect(ccw.omega!).toBeCloseTo(1.047, 3);
    expect(ccw.stdError!).toBeLessThan(1e-3);
    expect(ccw.turns).toBeCloseTo((1.047 * 239) / 30 / (2 * Math.PI), 2);
    expect(measureOmegaFromMark(mark(-2.5, false, 0.3), centre).omega!).toBeCloseTo(-2.5, 3);
    expect(measureOmegaFromMark(mark(1.047, true, 0.3), centre, { mirrored: true }).omega!).toBeCloseTo(1.047, 3);
  });

  it("widens the standard error for errors correlated from frame to frame (Santer et al. 2000)", () => {
    const t = Array.from({ length: 200 }, (_, i) => i / 30);
    const normal = gaussian(seededRandom(9));
    let drift = 0;
    const white = t.map((ti) => 1.1 * ti + 0.001 * normal());
    const wandering = t.map((ti) => {
      drift = 0.9 * drift + 0.001 * normal();
      return 1.1 * ti + drift;
    });
    const plain = rateFit(t, white)!;
    const correlated = rateFit(t, wandering)!;
    expect(Math.abs(plain.lag1)).toBeLessThan(0.2);
    expect(correlated.lag1).toBeGreaterThan(0.7);
    // About sqrt((1 + r1)/(1 - r1)) wider than the textbook error of the same fit.
    const textbook = linearFit(t, wandering).slopeSE;
    expect(correlated.stdError / textbook).toBeGreaterThan(2.5);
  });

  it("gives no rate, with a reason, from too little", () => {
    expect(measureOmegaFromMark(mark(1, false, 0).slice(0, 3), centre).reason).toMatch(/at least 5/);
    expect(measureOmegaFromMark(mark(0.001, false, 0), centre).reason).toMatch(/too little/);
    expect(measureOmegaFromMark(mark(1, false, 0), { x: Number.NaN, y: 0 }).omega).toBeNull();
  });
});
