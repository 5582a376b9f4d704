import { mean, sumNthPowerDeviations } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { norrisCertified, norrisData } from "../../tests/fixtures/nist-strd-norris";
import { CalibrationInputError, fitRateCalibration, frameRateFromTiming, scaleFromKnownLength, trueRateFromCalibration } from "./calibrations";

const relErr = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe("fitRateCalibration", () => {
  it("reproduces NIST StRD Norris (NIST/ITL Statistical Reference Datasets) when Norris's x is the set rate and y the meter reading", () => {
    const readings = norrisData.map(([y, x]) => ({ setRpm: x, measuredRpm: y }));
    const fit = fitRateCalibration(readings, 1);
    expect(relErr(fit.slope, norrisCertified.slope)).toBeLessThan(1e-12);
    expect(relErr(fit.interceptRpm, norrisCertified.intercept)).toBeLessThan(1e-9);
    expect(relErr(fit.slopeStdError, norrisCertified.slopeSD)).toBeLessThan(1e-10);
    expect(relErr(fit.interceptStdErrorRpm, norrisCertified.interceptSD)).toBeLessThan(1e-10);
    expect(relErr(fit.residualSdRpm, norrisCertified.residualSD)).toBeLessThan(1e-10);
    // Norris's low points (e.g. set 0.2, reading 0.1) are far off in share of the set rate: a 1 % tolerance must fail.
    const worst = Math.max(...norrisData.map(([y, x]) => (100 * Math.abs(y - x)) / x));
    expect(worst).toBeGreaterThan(1);
    expect(fit.maxDeviationPct).toBeCloseTo(worst, 9);
    expect(fit.passed).toBe(false);
  });

  it("gives cov(slope, intercept) = −x̄·var(slope), the value a direct (uncentred) 2×2 inverse gives", () => {
    const readings = norrisData.map(([y, x]) => ({ setRpm: x, measuredRpm: y }));
    const fit = fitRateCalibration(readings, 1);
    const x = readings.map((r) => r.setRpm);
    const n = x.length;
    const sx = x.reduce((s, v) => s + v, 0);
    const sxx = x.reduce((s, v) => s + v * v, 0);
    const det = n * sxx - sx * sx;
    const s2 = norrisCertified.residualSD ** 2;
    // (XᵀX)⁻¹ for columns [1, x]: off-diagonal −Σx/det.
    expect(relErr(fit.slopeInterceptCovarianceRpm, (-sx / det) * s2)).toBeLessThan(1e-8);
  });

  it("passes a table whose readings lie within its tolerance and fails one that strays", () => {
    const good = [5, 10, 15, 20].map((s) => ({ setRpm: s, measuredRpm: 1.004 * s - 0.02 }));
    const fit = fitRateCalibration(good, 1);
    expect(fit.slope).toBeCloseTo(1.004, 10);
    expect(fit.interceptRpm).toBeCloseTo(-0.02, 10);
    expect(fit.passed).toBe(true);
    const bad = [...good.slice(0, 3), { setRpm: 20, measuredRpm: 20.5 }];
    expect(fitRateCalibration(bad, 1).passed).toBe(false);
  });

  it("refuses fewer than three readings, a zero rate and a single set rate", () => {
    expect(() =>
      fitRateCalibration(
        [
          { setRpm: 5, measuredRpm: 5 },
          { setRpm: 10, measuredRpm: 10 },
        ],
        1,
      ),
    ).toThrow(/3 or more/);
    expect(() =>
      fitRateCalibration(
        [
          { setRpm: 0, measuredRpm: 0 },
          { setRpm: 5, measuredRpm: 5 },
          { setRpm: 10, measuredRpm: 10 },
        ],
        1,
      ),
    ).toThrow(CalibrationInputError);
    expect(() =>
      fitRateCalibration(
        [
          { setRpm: 5, measuredRpm: 5.1 },
          { setRpm: 5, measuredRpm: 5 },
          { setRpm: 5, measuredRpm: 4.9 },
        ],
        1,
      ),
    ).toThrow(/two different/);
  });
});

describe("trueRateFromCalibration", () => {
  const readings = [4, 8, 12, 16, 20].map((s, i) => ({ setRpm: s, measuredRpm: 1.004 * s - 0.02 + [0.01, -0.012, 0.004, 0.009, -0.011][i]! }));
  const fit = fitRateCalibration(readings, 1);
  const line = {
    slope: fit.slope,
    intercept: fit.interceptRpm,
    slopeStdError: fit.slopeStdError,
    interceptStdError: fit.interceptStdErrorRpm,
    slopeInterceptCovariance: fit.slopeInterceptCovarianceRpm,
  };

  it("matches the standard error of the mean response of a fitted line, s·√(1/n + (x₀ − x̄)²/Sxx) (Draper & Smith 1998, Applied Regression Analysis, 3rd ed.; from memory)", () => {
    const x = readings.map((r) => r.setRpm);
    const n = x.length;
    const xMean = mean(x);
    const sxx = sumNthPowerDeviations(x, 2);
    for (const x0 of [0, 7, xMean, 25]) {
      const expected = fit.residualSdRpm * Math.sqrt(1 / n + (x0 - xMean) ** 2 / sxx);
      const got = trueRateFromCalibration(line, x0);
      expect(relErr(got.stdErrorRpm, expected)).toBeLessThan(1e-9);
      expect(got.rpm).toBeCloseTo(fit.slope * x0 + fit.interceptRpm, 12);
    }
  });

  it("is smallest at the mean set rate: leaving out the covariance would overstate it there", () => {
    const atMean = trueRateFromCalibration(line, fit.meanSetRateRpm).stdErrorRpm;
    const noCov = trueRateFromCalibration({ ...line, slopeInterceptCovariance: 0 }, fit.meanSetRateRpm).stdErrorRpm;
    expect(atMean).toBeLessThan(noCov);
    expect(atMean).toBeLessThan(trueRateFromCalibration(line, 4).stdErrorRpm);
  });
});

describe("scale and timing", () => {
  it("gives pixels per metre with relative uncertainties in quadrature", () => {
    const r = scaleFromKnownLength({ knownLengthM: 0.5, knownLengthUncertaintyM: 0.0005, lengthPx: 1000, lengthUncertaintyPx: 2 });
    expect(r.scalePxPerM).toBeCloseTo(2000, 10);
    expect(r.scaleUncertaintyPxPerM).toBeCloseTo(2000 * Math.sqrt(0.001 ** 2 + 0.002 ** 2), 10);
    expect(() => scaleFromKnownLength({ knownLengthM: 0, knownLengthUncertaintyM: 0, lengthPx: 10, lengthUncertaintyPx: 1 })).toThrow(CalibrationInputError);
  });

  it("gives the true frame rate from counted intervals over a reference time", () => {
    const r = frameRateFromTiming({
      nominalFrameRateFps: 30,
      frameIntervals: 1798,
      frameIntervalsUncertainty: 1,
      referenceElapsedS: 60,
      referenceElapsedUncertaintyS: 0.02,
    });
    expect(r.trueFrameRateFps).toBeCloseTo(1798 / 60, 12);
    expect(r.frameRateDeviationPct).toBeCloseTo((100 * (1798 / 60 - 30)) / 30, 12);
    expect(r.trueFrameRateUncertaintyFps).toBeCloseTo((1798 / 60) * Math.hypot(1 / 1798, 0.02 / 60), 12);
  });
});
