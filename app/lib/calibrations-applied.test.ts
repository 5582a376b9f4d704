import { describe, expect, it } from "vitest";
import { correctFrameTimes, describeRate, flaggedCalibrations, frameTimeCorrection, scaleInUse, SCALE_EFFECT } from "./calibrations-applied";

describe("timing check: frame times rescaled by nominal/true frame rate", () => {
  // A camera sold as 30 frames/s whose clock runs 2 % fast: it takes 30.6 frames per reference second.
  const fast = { calibrationId: 7, nominalFrameRateFps: 30, trueFrameRateFps: 30.6, trueFrameRateUncertaintyFps: 0.03 };

  it("a clock 2 % fast gives the factor 30/30.6 and the true rate's relative uncertainty (JCGM 100:2008, GUM §5.1.6)", () => {
    const { correction, entry } = frameTimeCorrection(fast, 30);
    expect(correction!.factor).toBeCloseTo(30 / 30.6, 12);
    expect(correction!.relStdError).toBeCloseTo(0.03 / 30.6, 12);
    expect(entry.use).toBe("applied");
    expect(entry.text).toMatch(/^timing check #7: frame times × 0\.98039 /);
    expect(entry.text).toContain("fast by 2 %");
  });

  it("a timing check made at another nominal rate is not applied, and says why", () => {
    const { correction, entry } = frameTimeCorrection(fast, 60);
    expect(correction).toBeNull();
    expect(entry.use).toBe("not_used");
    expect(entry.text).toContain("30 frames/s nominal and this run was filmed at 60 frames/s");
  });

  it("a record without a true frame rate is not applied", () => {
    const { correction, entry } = frameTimeCorrection({ ...fast, trueFrameRateFps: null }, 30);
    expect(correction).toBeNull();
    expect(entry.use).toBe("not_used");
  });

  it("correctFrameTimes multiplies every time and keeps the rest of each point", () => {
    const out = correctFrameTimes(
      [
        { t: 0, x: 1, y: 2 },
        { t: 3, x: 4, y: 5 },
      ],
      0.5,
    );
    expect(out).toEqual([
      { t: 0, x: 1, y: 2 },
      { t: 1.5, x: 4, y: 5 },
    ]);
  });
});

describe("scale calibration against the view setup's scale", () => {
  const record = { calibrationId: 9, scalePxPerM: 612, scaleUncertaintyPxPerM: 1.2, tolerancePct: 1 };

  it("fills in a view setup without a scale", () => {
    const r = scaleInUse(null, record);
    expect(r.pxPerM).toBe(612);
    expect(r.entry.use).toBe("applied");
    expect(r.entry.text).toContain("the view setup has no scale");
  });

  it("a view setup within the tolerance keeps its scale, and the record is reported unused", () => {
    const r = scaleInUse(615, record);
    expect(r.pxPerM).toBe(615);
    expect(r.entry.use).toBe("not_used");
    expect(r.entry.text).toMatch(/^scale calibration #9: not used — the view setup's scale 615 px\/m agrees .* within 0\.49 % \(tolerance 1 %\)/);
  });

  it("a view setup 5 % off with a 1 % tolerance is flagged in words, and its own scale is kept", () => {
    const r = scaleInUse(612 * 1.05, record);
    expect(r.pxPerM).toBeCloseTo(612 * 1.05, 9);
    expect(r.differencePct).toBeCloseTo(5, 9);
    expect(r.entry.use).toBe("flagged");
    expect(r.entry.text).toContain("differs from the calibration's 612.0 ± 1.2 px/m by 5 % (tolerance 1 %)");
    expect(flaggedCalibrations([r.entry])).toHaveLength(1);
  });

  it("a record without a tolerance is judged on the default and says so", () => {
    const r = scaleInUse(612 * 1.02, { ...record, tolerancePct: null });
    expect(r.entry.use).toBe("flagged");
    expect(r.entry.text).toContain("the default: the record states none");
  });

  it("every scale entry says that f does not depend on the scale", () => {
    for (const s of [null, 615, 700]) expect(scaleInUse(s, record).entry.text).toContain(SCALE_EFFECT);
  });
});

describe("rate calibration in words", () => {
  it("names the record, the set rate and the true rate with its standard error", () => {
    expect(describeRate({ calibrationId: 12, setRpm: 10, trueRpm: 10.0412, stdErrorRpm: 0.0123 }).text).toMatch(
      /^rate calibration #12: set 10\.00 rpm → 10\.041 ± 0\.012 rpm/,
    );
  });
});
