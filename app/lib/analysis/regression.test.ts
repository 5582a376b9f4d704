import { describe, expect, it } from "vitest";
import { norrisCertified, norrisData } from "../../../tests/fixtures/nist-strd-norris";
import { leastSquares, linearFit } from "./regression";

const relErr = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("linearFit", () => {
  it("reproduces the certified values of NIST StRD Norris (NIST/ITL Statistical Reference Datasets)", () => {
    const x = norrisData.map(([, xv]) => xv);
    const y = norrisData.map(([yv]) => yv);
    const fit = linearFit(x, y);
    expect(relErr(fit.intercept, norrisCertified.intercept)).toBeLessThan(1e-9);
    expect(relErr(fit.slope, norrisCertified.slope)).toBeLessThan(1e-12);
    expect(relErr(fit.interceptSE, norrisCertified.interceptSD)).toBeLessThan(1e-10);
    expect(relErr(fit.slopeSE, norrisCertified.slopeSD)).toBeLessThan(1e-10);
    expect(relErr(fit.residualSD, norrisCertified.residualSD)).toBeLessThan(1e-10);
    expect(Math.abs(fit.r2 - norrisCertified.r2)).toBeLessThan(1e-13);
    // The largest residual is that of the published point (x 887.6, y 888.8) or another of Norris's;
    // recompute it from the certified line instead of trusting the fit itself.
    const certifiedMax = Math.max(...norrisData.map(([yv, xv]) => Math.abs(yv - (norrisCertified.intercept + norrisCertified.slope * xv))));
    expect(fit.maxAbsResidual).toBeCloseTo(certifiedMax, 9);
  });

  it("keeps its digits when x carries a large offset (clock times in seconds)", () => {
    const x = norrisData.map(([, xv]) => xv + 1.7e9);
    const y = norrisData.map(([yv]) => yv);
    const fit = linearFit(x, y);
    expect(relErr(fit.slope, norrisCertified.slope)).toBeLessThan(1e-9);
    expect(relErr(fit.slopeSE, norrisCertified.slopeSD)).toBeLessThan(1e-6);
  });

  it("refuses input that has no line through it", () => {
    expect(() => linearFit([1], [2])).toThrow(RangeError);
    expect(() => linearFit([1, 1, 1], [1, 2, 3])).toThrow(/equal/);
    expect(() => linearFit([1, 2, Number.NaN], [1, 2, 3])).toThrow(RangeError);
    expect(() => linearFit([1, 2], [1, 2, 3])).toThrow(RangeError);
  });

  it("has no standard errors from two points (no degrees of freedom)", () => {
    const fit = linearFit([0, 2], [1, 5]);
    expect(fit.slope).toBeCloseTo(2, 14);
    expect(fit.intercept).toBeCloseTo(1, 14);
    expect(Number.isNaN(fit.slopeSE)).toBe(true);
  });
});

describe("leastSquares", () => {
  it("fits a quadratic exactly and gives the NIST Norris SEs as a general solver", () => {
    const x = norrisData.map(([, xv]) => xv);
    const y = norrisData.map(([yv]) => yv);
    const fit = leastSquares(
      x.map((v) => [1, v]),
      y,
      { hasIntercept: true },
    );
    expect(relErr(fit.coefficients[1]!, norrisCertified.slope)).toBeLessThan(1e-12);
    expect(relErr(fit.standardErrors[0]!, norrisCertified.interceptSD)).toBeLessThan(1e-9);
    expect(relErr(fit.residualSumOfSquares, norrisCertified.residualSumOfSquares)).toBeLessThan(1e-10);
    expect(fit.degreesOfFreedom).toBe(34);

    const t = [-2, -1, 0, 1, 2, 3];
    const q = leastSquares(
      t.map((v) => [1, v, v * v]),
      t.map((v) => 3 - 2 * v + 0.5 * v * v),
    );
    expect(q.coefficients[0]).toBeCloseTo(3, 12);
    expect(q.coefficients[1]).toBeCloseTo(-2, 12);
    expect(q.coefficients[2]).toBeCloseTo(0.5, 12);
  });

  it("throws on a rank-deficient design instead of returning a number", () => {
    expect(() =>
      leastSquares(
        [
          [1, 2],
          [2, 4],
          [3, 6],
        ],
        [1, 2, 3],
      ),
    ).toThrow(/rank deficient/);
  });
});
