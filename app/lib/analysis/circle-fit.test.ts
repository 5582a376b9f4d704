import { describe, expect, it } from "vitest";
import { fitCircle, fitCircleAlgebraic } from "./circle-fit";

// Gander, Golub & Strebel 1994, BIT 34, 558: the six-point example. The data are quoted from
// memory; the expected geometric-fit values were recomputed and agree with the paper's printed
// ones as remembered (from memory).
const ggsPoints = [
  { x: 1, y: 7 },
  { x: 2, y: 6 },
  { x: 5, y: 8 },
  { x: 7, y: 7 },
  { x: 9, y: 5 },
  { x: 3, y: 7 },
];

describe("geometric circle fit", () => {
  it("finds centre (4.7398, 2.9835), r 4.7142, Σd² 1.2276 on the Gander, Golub & Strebel 1994 example (data from memory, values recomputed)", () => {
    const fit = fitCircle(ggsPoints)!;
    expect(fit).not.toBeNull();
    expect(fit.converged).toBe(true);
    expect(fit.cx).toBeCloseTo(4.7398, 4);
    expect(fit.cy).toBeCloseTo(2.9835, 4);
    expect(fit.radius).toBeCloseTo(4.7142, 4);
    expect(fit.sumSquaredDistances).toBeCloseTo(1.2276, 4);
  });

  it("improves on the algebraic (Kåsa) start, which is biased on this short arc", () => {
    const kasa = fitCircleAlgebraic(ggsPoints)!;
    const geo = fitCircle(ggsPoints)!;
    const cost = (c: { cx: number; cy: number; radius: number }) => ggsPoints.reduce((s, p) => s + (Math.hypot(p.x - c.cx, p.y - c.cy) - c.radius) ** 2, 0);
    expect(cost(kasa)).toBeGreaterThan(geo.sumSquaredDistances * 1.05);
    expect(Math.abs(kasa.radius - geo.radius)).toBeGreaterThan(0.1);
  });

  it("recovers an exact circle far from the origin", () => {
    const pts = Array.from({ length: 40 }, (_, i) => ({
      x: 1000 + 35 * Math.cos(0.1 * i),
      y: -2000 + 35 * Math.sin(0.1 * i),
    }));
    const fit = fitCircle(pts)!;
    expect(fit.cx).toBeCloseTo(1000, 8);
    expect(fit.cy).toBeCloseTo(-2000, 8);
    expect(fit.radius).toBeCloseTo(35, 8);
    expect(fit.rmsResidual).toBeLessThan(1e-8);
  });

  it("returns no circle for collinear points or too few", () => {
    expect(
      fitCircle([
        { x: 0, y: 0 },
        { x: 1, y: 1 },
        { x: 2, y: 2 },
        { x: 3, y: 3 },
      ]),
    ).toBeNull();
    expect(
      fitCircle([
        { x: 0, y: 0 },
        { x: 1, y: 1 },
      ]),
    ).toBeNull();
  });
});
