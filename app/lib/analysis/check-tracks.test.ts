import { describe, expect, it } from "vitest";
import { runTheoryCheck } from "./check";
import type { TheoryCheckInput } from "./check-result";
import { checkTracks } from "./check-tracks";
import { defaultView, inertialTrack } from "../../../tests/fixtures/inertial-tracks";
import { seededRandom } from "../random";

const OMEGA = (10 * 2 * Math.PI) / 60;

/** A float on an inertial circle of a table turning at omegaTrue, checked against the set rate OMEGA. */
function input(seed: number, { omegaTrue = OMEGA, seconds = 6, start = { x: 0.02, y: -0.01 } } = {}): TheoryCheckInput {
  const points = inertialTrack({
    omega: omegaTrue,
    fps: 30,
    duration: seconds,
    start,
    velocity: { x: 0.05, y: 0.02 },
    noisePx: 0.3,
    random: seededRandom(seed),
    view: defaultView,
  });
  return { points, setup: defaultView, omegaSet: OMEGA, cameraMode: "rotating", settings: { tolerance: 0.03 } };
}

describe("every track of a run checked and combined", () => {
  it("one track: the combined check is that track's check, unchanged", () => {
    const one = input(1);
    const r = checkTracks([{ number: 1, input: one }], "float")!;
    expect(r.check).toEqual(runTheoryCheck(one));
    expect(r.checks).toHaveLength(1);
    expect(r.combination).toMatchObject({ n: 1, of: 1, scale: 1, consistent: true, words: "One float was checked." });
  });

  it("three floats at the true rate: three fits, one weighted mean, agreeing with each other and with theory", () => {
    const r = checkTracks(
      [1, 2, 3].map((number) => ({ number, input: input(10 + number, { start: { x: 0.02 * number, y: -0.01 } }) })),
      "float",
    )!;
    expect(r.checks.map((c) => [c.trackNumber, c.combined, c.flagged])).toEqual([
      [1, true, false],
      [2, true, false],
      [3, true, false],
    ]);
    const fs = r.checks.map((c) => c.fMeasured!);
    const ws = r.checks.map((c) => 1 / c.fStdError! ** 2);
    const mean = fs.reduce((s, f, i) => s + f * ws[i]!, 0) / ws.reduce((a, b) => a + b);
    expect(r.check.fMeasured).toBeCloseTo(mean, 12);
    // Smaller than any one track's error (unless the scatter widened it).
    expect(r.check.fStdError!).toBeLessThan(Math.min(...r.checks.map((c) => c.fStdError!)) * r.combination!.scale);
    expect(r.combination!.consistent).toBe(true);
    expect(r.combination!.words).toMatch(/^The three floats agree with each other within their errors/);
    expect(r.check.verdict).toBe("agrees");
    expect(r.check.reason).toMatch(/weighted mean of three floats/);
    // The plots are the representative track's.
    expect(r.check.series.rotating.length).toBeGreaterThan(0);
  });

  it("a float that turned at another rate is flagged, the combined error is widened by the Birge ratio, and a too-short track is left out with its reason", () => {
    const tracks = [
      { number: 1, input: input(21) },
      { number: 2, input: input(22, { omegaTrue: OMEGA * 1.06, start: { x: -0.03, y: 0.02 } }) },
      { number: 3, input: input(23, { start: { x: 0.04, y: 0.03 } }) },
      { number: 4, input: input(24, { start: { x: 0.01, y: 0.05 } }) },
      { number: 5, input: input(25, { seconds: 0.3 }) },
    ];
    const r = checkTracks(tracks, "float")!;
    expect(r.checks.map((c) => c.flagged)).toEqual([false, true, false, false, false]);
    expect(r.checks[4]).toMatchObject({ combined: false, verdict: "inconclusive", fMeasured: null, pull: null });
    expect(r.checks[4]!.reason).toMatch(/usable points|inertial period/);
    const c = r.combination!;
    expect([c.n, c.of, c.consistent]).toEqual([4, 5, false]);
    expect(c.scale).toBeGreaterThan(1);
    expect(c.scale).toBeCloseTo(c.birgeRatio!, 12);
    expect(r.check.fStdError!).toBeCloseTo(c.stdError * c.scale, 12);
    expect(c.words).toMatch(/^Float 2 disagrees with the others beyond its error/);
    expect(c.words).toMatch(/widened ×/);
    expect(c.words).toMatch(/Float 5 could not be fitted and is left out/);
    expect(Math.abs(r.checks[1]!.pull!)).toBeGreaterThan(2);
  });

  it("the timing check's share of the error is common to all tracks: added once to the combined error, not averaged down", () => {
    const timing = { factor: 1, relStdError: 0.004, calibrationId: 3 };
    const r = checkTracks(
      [1, 2, 3].map((number) => ({ number, input: { ...input(30 + number, { start: { x: 0.02 * number, y: 0 } }), frameTimes: timing } })),
      "float",
    )!;
    expect(r.check.fStdErrorTiming!).toBeCloseTo(Math.abs(r.check.fMeasured!) * 0.004, 12);
    expect(r.check.fStdError!).toBeCloseTo(Math.hypot(r.combination!.stdError * r.combination!.scale, r.check.fStdErrorTiming!), 12);
  });
});
