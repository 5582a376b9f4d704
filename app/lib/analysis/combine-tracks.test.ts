import { chiSquaredDistributionTable } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { chiSquaredUpperTail } from "./chi-squared";
import { combineMeasurements, CONSISTENCY_P, PULL_LIMIT } from "./combine-tracks";

describe("the chi-squared upper tail", () => {
  it("meets the 5 % and 1 % critical values of Hines & Montgomery (1980), Table III, as simple-statistics ships them (two decimals)", () => {
    const table = chiSquaredDistributionTable as unknown as Record<number, Record<number, number>>;
    for (let dof = 1; dof <= 30; dof++) {
      for (const p of [0.05, 0.01]) {
        const critical = table[dof]?.[p];
        expect(critical, `dof ${dof}`).toBeDefined();
        // A two-decimal critical value moves the tail by at most its density there times 0.005.
        expect(chiSquaredUpperTail(critical!, dof), `dof ${dof}, p ${p}`).toBeCloseTo(p, 3);
      }
    }
  });

  it("is e^(−x/2) for two degrees of freedom, and e^(−x/2)(1 + x/2) for four (closed forms)", () => {
    for (const x of [0.01, 0.5, 3, 12, 40]) {
      expect(chiSquaredUpperTail(x, 2)).toBeCloseTo(Math.exp(-x / 2), 12);
      expect(chiSquaredUpperTail(x, 4)).toBeCloseTo(Math.exp(-x / 2) * (1 + x / 2), 12);
    }
    expect(chiSquaredUpperTail(0, 3)).toBe(1);
    expect(chiSquaredUpperTail(Number.NaN, 3)).toBeNaN();
  });
});

describe("combining the tracks of one run", () => {
  it("Taylor's three resistances 11 ± 1, 12 ± 1, 10 ± 3 Ω give 11.4 ± 0.7 Ω (Taylor 1997, An Introduction to Error Analysis, §7.2; from memory)", () => {
    const c = combineMeasurements([
      { value: 11, stdError: 1 },
      { value: 12, stdError: 1 },
      { value: 10, stdError: 3 },
    ])!;
    expect(c.mean).toBeCloseTo(11.42, 2);
    expect(c.stdError).toBeCloseTo(0.69, 2);
    // They agree: χ² = (11 − x̄)² + (12 − x̄)² + ((10 − x̄)/3)² = 0.737, below its 2 degrees of freedom, so nothing is widened.
    const m = 217 / 19; // (11 + 12 + 10/9)/(2 + 1/9)
    expect(c.mean).toBeCloseTo(m, 12);
    expect(c.chi2).toBeCloseTo((11 - m) ** 2 + (12 - m) ** 2 + ((10 - m) / 3) ** 2, 12);
    expect(c.chi2).toBeCloseTo(0.737, 3);
    expect(c.birgeRatio!).toBeLessThan(1);
    expect(c.scale).toBe(1);
    expect(c.scaledStdError).toBe(c.stdError);
    expect(c.consistent).toBe(true);
    expect(c.flagged).toEqual([false, false, false]);
  });

  it("10 ± 4 and 30 ± 5 average to 17.80 ± 3.12, and the scale factor widens that error to S·3.12 with S = √χ² (Dorigo, 'What the PDG weighted average means', Science 2.0)", () => {
    const c = combineMeasurements([
      { value: 10, stdError: 4 },
      { value: 30, stdError: 5 },
    ])!;
    expect(c.mean).toBeCloseTo(17.8, 2);
    expect(c.stdError).toBeCloseTo(3.12, 2);
    // χ² = 7.8²/16 + 12.2²/25 = 9.76 for one degree of freedom; S = 3.12, so 3.12 becomes 9.76.
    expect(c.chi2).toBeCloseTo(9.756, 3);
    expect(c.birgeRatio!).toBeCloseTo(3.1235, 4);
    expect(c.scaledStdError).toBeCloseTo(9.756, 3);
    expect(c.pValue!).toBeCloseTo(0.0018, 4);
    expect(c.consistent).toBe(false);
    // Two that disagree: neither can be blamed.
    expect(c.pulls[0]).toBeCloseTo(-1.95, 2);
    expect(c.pulls[1]).toBeCloseTo(2.44, 2);
    expect(c.flagged).toEqual([false, false]);
    expect(c.restConsistent).toBe(false);
  });

  it("one measurement is itself: its value and error, nothing to test", () => {
    const c = combineMeasurements([{ value: 2.093, stdError: 0.004 }])!;
    expect(c.mean).toBe(2.093);
    expect(c.stdError).toBeCloseTo(0.004, 15);
    expect(c.scaledStdError).toBeCloseTo(0.004, 15);
    expect([c.birgeRatio, c.pValue, c.dof, c.chi2]).toEqual([null, null, 0, 0]);
    expect(c.consistent).toBe(true);
    expect(c.flagged).toEqual([false]);
  });

  it("equal errors give the plain mean and σ/√n", () => {
    const values = [2.08, 2.1, 2.095, 2.11];
    const c = combineMeasurements(values.map((value) => ({ value, stdError: 0.01 })))!;
    expect(c.mean).toBeCloseTo(values.reduce((a, b) => a + b) / 4, 12);
    expect(c.stdError).toBeCloseTo(0.01 / 2, 12);
  });

  it("one track far off among three agreeing ones is flagged, and the combined error is widened by the Birge ratio", () => {
    const c = combineMeasurements([
      { value: 2.094, stdError: 0.002 },
      { value: 2.093, stdError: 0.002 },
      { value: 2.2, stdError: 0.002 },
      { value: 2.095, stdError: 0.002 },
    ])!;
    expect(c.consistent).toBe(false);
    expect(c.pValue!).toBeLessThan(CONSISTENCY_P);
    // The outlier drags the mean, so every pull is large; only the outlier is named, and the rest agree.
    expect(c.flagged).toEqual([false, false, true, false]);
    expect(c.restConsistent).toBe(true);
    expect(Math.abs(c.pulls[2]!)).toBeGreaterThan(PULL_LIMIT);
    expect(c.scale).toBeCloseTo(Math.sqrt(c.chi2 / 3), 12);
    expect(c.scaledStdError).toBeCloseTo(c.stdError * c.scale, 15);
    expect(c.scale).toBeGreaterThan(10);
  });

  it("refuses what cannot be weighted: no measurements, a zero or missing error", () => {
    expect(combineMeasurements([])).toBeNull();
    expect(combineMeasurements([{ value: 1, stdError: 0 }])).toBeNull();
    expect(combineMeasurements([{ value: 1, stdError: Number.NaN }])).toBeNull();
  });
});
