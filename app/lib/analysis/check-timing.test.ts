import { describe, expect, it } from "vitest";
import { runTheoryCheck, type TheoryCheckInput } from "./check";
import { frameTimeCorrection } from "../calibrations-applied";
import { defaultView, inertialTrack } from "../../../tests/fixtures/inertial-tracks";
import { seededRandom } from "../random";

const OMEGA = 1.1;
const NOMINAL_FPS = 30;
/** The camera's clock runs 2 % fast: it takes 30.6 frames per reference second while stamping them 1/30 s apart. */
const TRUE_FPS = 30.6;

/** A track filmed at the true rate, stamped with the camera's own (wrong) times i/30. */
function fastClockTrack(cameraMode: "rotating" | "lab", seed: number) {
  const filmed = inertialTrack({ omega: OMEGA, fps: TRUE_FPS, duration: 6, drag: 0.03, noisePx: 0.3, cameraMode, random: seededRandom(seed) });
  return filmed.map((p, i) => ({ ...p, t: i / NOMINAL_FPS }));
}

function checkOf(cameraMode: "rotating" | "lab", seed: number, extra: Partial<TheoryCheckInput> = {}) {
  return runTheoryCheck({
    points: fastClockTrack(cameraMode, seed),
    setup: defaultView,
    omegaSet: OMEGA,
    cameraMode,
    t0: 0,
    settings: { tolerance: 0.01 },
    ...extra,
  });
}

const timing = (uncertaintyFps: number) =>
  frameTimeCorrection(
    { calibrationId: 7, nominalFrameRateFps: NOMINAL_FPS, trueFrameRateFps: TRUE_FPS, trueFrameRateUncertaintyFps: uncertaintyFps },
    NOMINAL_FPS,
  ).correction!;

describe("a timing check in force corrects the camera's frame times (analytic inertial circles, 0.3 px noise)", () => {
  for (const [cameraMode, seed] of [
    ["rotating", 41],
    ["lab", 42],
  ] as const) {
    it(`${cameraMode === "lab" ? "lab-fixed" : "co-rotating"} camera 2 % fast: biased low (2 % co-rotating, 1 % lab-fixed) without the check, within its error of the truth with it`, () => {
      const truth = 2 * OMEGA;
      const raw = checkOf(cameraMode, seed);
      expect(raw.frameTimeFactor).toBeNull();
      // k = 1.02: times too long by k make f low by 1/k; a lab-fixed camera is also de-rotated by
      // Ω·k·t instead of Ω·t, which turns the velocity (k − 1)Ω faster: f/truth = (1 + k)/(2k).
      const k = TRUE_FPS / NOMINAL_FPS;
      const expectedBias = cameraMode === "lab" ? (1 + k) / (2 * k) : 1 / k;
      expect(Math.abs(raw.fMeasured! - expectedBias * truth)).toBeLessThan(1.96 * raw.fStdError!);
      expect(Math.abs(raw.fMeasured! - truth)).toBeGreaterThan(1.96 * raw.fStdError!);
      expect(raw.verdict).not.toBe("agrees");
      if (cameraMode === "rotating") expect(raw.verdict).toBe("disagrees");

      const corrected = checkOf(cameraMode, seed, { frameTimes: timing(0.003) });
      expect(corrected.frameTimeFactor).toBeCloseTo(NOMINAL_FPS / TRUE_FPS, 12);
      expect(Math.abs(corrected.fMeasured! - truth)).toBeLessThan(1.96 * corrected.fStdError!);
      expect(corrected.verdict).toBe("agrees");
      expect(corrected.reason).toContain("Frame times were multiplied by 0.98039 from the timing check in force (#7)");
    });
  }

  it("the timing check's uncertainty joins f measured's in quadrature and widens the 95 % interval", () => {
    const tight = checkOf("rotating", 43, { frameTimes: timing(0) });
    const loose = checkOf("rotating", 43, { frameTimes: timing(0.15) }); // ±0.5 % of the true rate
    expect(tight.fMeasured).toBeCloseTo(loose.fMeasured!, 12);
    expect(tight.fStdErrorTiming).toBe(0);
    expect(loose.fStdErrorTiming!).toBeCloseTo(Math.abs(loose.fMeasured!) * (0.15 / TRUE_FPS), 12);
    expect(loose.fStdError!).toBeCloseTo(Math.hypot(tight.fStdError!, loose.fStdErrorTiming!), 12);
    const width = (r: typeof tight) => r.interval95!.high - r.interval95!.low;
    expect(width(loose)).toBeGreaterThan(1.5 * width(tight));
  });

  it("an unusable correction gives an inconclusive verdict rather than a silent raw check", () => {
    const r = checkOf("rotating", 44, { frameTimes: { factor: Number.NaN, relStdError: 0, calibrationId: 7 } });
    expect(r.verdict).toBe("inconclusive");
    expect(r.reason).toContain("timing check");
  });
});
