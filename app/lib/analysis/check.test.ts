import { describe, expect, it } from "vitest";
import { runTheoryCheck } from "./check";
import type { TheoryCheckInput } from "./check";
import { rotatingFrameToImage } from "./frames";
import { omegaFromTableRate } from "./run-omega";
import type { InertialTrackSpec } from "../../../tests/fixtures/inertial-tracks";
import { defaultView, inertialTrack } from "../../../tests/fixtures/inertial-tracks";
import { gaussian, seededRandom } from "../random";

function checkOf(spec: InertialTrackSpec, extra: Partial<TheoryCheckInput> = {}) {
  return runTheoryCheck({
    points: inertialTrack(spec),
    setup: spec.view ?? defaultView,
    omegaSet: spec.omega,
    cameraMode: spec.cameraMode ?? "rotating",
    flatTable: spec.flatTable,
    t0: spec.startTime,
    ...extra,
  });
}

describe("theory check on analytic inertial motions with tracking noise", () => {
  const cases: (InertialTrackSpec & { label: string })[] = [];
  for (const omega of [1.1, -1.1]) {
    for (const drag of [0, 0.06]) {
      for (const cameraMode of ["rotating", "lab"] as const) {
        cases.push({
          label: `${omega > 0 ? "ccw" : "cw"} table, drag ${drag} s⁻¹, ${cameraMode === "lab" ? "lab-fixed" : "co-rotating"} camera`,
          omega,
          drag,
          cameraMode,
          fps: 30,
          duration: 7,
          startTime: 12.5,
          noisePx: 0.4,
          random: seededRandom(cases.length + 11),
        });
      }
    }
  }
  cases.push({
    label: "puck on a flat table, lab-fixed camera (a straight line in the room)",
    omega: 0.8,
    fps: 25,
    duration: 9,
    flatTable: true,
    cameraMode: "lab",
    start: { x: -0.15, y: 0.1 },
    velocity: { x: 0.06, y: 0.02 },
    noisePx: 0.4,
    random: seededRandom(99),
  });

  for (const c of cases) {
    it(`recovers f = 2Ω within 0.5% and agrees: ${c.label}`, () => {
      const r = checkOf(c);
      expect(r.verdict, r.reason).toBe("agrees");
      expect(Math.abs(r.fMeasured! / (2 * c.omega) - 1)).toBeLessThan(0.005);
      expect(r.fPredicted).toBeCloseTo(2 * c.omega, 12);
      expect(r.omegaSource).toBe("set rate, uncalibrated");
      expect(r.deflection).toBe(c.omega > 0 ? "right" : "left");
      expect(r.reason).toMatch(/within the 3% tolerance/);
      if (!c.flatTable) expect(Math.abs(r.drag! - (c.drag ?? 0))).toBeLessThan(0.01);
    });
  }

  it("fits the inertial circle: radius |V|/|f|, period π/|Ω|, centre drawn back on the image at t₀", () => {
    const spec = { omega: 1.1, fps: 30, duration: 7, noisePx: 0.3, cameraMode: "lab" as const, startTime: 3, velocity: { x: 0.08, y: 0 } };
    const r = checkOf(spec);
    const c = r.circle!;
    // The analytic circle: centre z₀ + w₀/(i f) = (0.1, 0.05) + (0, −0.08/2.2), radius 0.08/2.2.
    const radius = 0.08 / 2.2;
    expect(c.radiusM!).toBeCloseTo(radius, 4);
    expect(c.radiusPx).toBeCloseTo(radius * defaultView.pxPerM!, 1);
    // Mean speed of noisy velocities over |f| predicted: within half a per cent.
    expect(Math.abs(r.predictedRadiusM! / radius - 1)).toBeLessThan(0.005);
    expect(c.period!).toBeCloseTo(Math.PI / 1.1, 2);
    expect(r.periodFromAngle!).toBeCloseTo(Math.PI / 1.1, 2);
    const centre = rotatingFrameToImage({ x: 0.1, y: 0.05 - radius }, defaultView, "lab", 1.1, 3);
    expect(c.cx).toBeCloseTo(centre.x, 0);
    expect(c.cy).toBeCloseTo(centre.y, 0);
    expect(c.rmsResidualPx).toBeLessThan(0.5);
    expect(r.series.rotating).toHaveLength(r.nPoints);
    expect(r.series.lab).toHaveLength(r.nPoints);
    expect(r.series.accelFit.length).toBeGreaterThan(150);
    expect(r.series.angle).toHaveLength(r.series.accelFit.length);
    expect(r.series.residuals).toHaveLength(r.series.accelFit.length);
  });

  it("gives the same f without a scale, in pixel units (f does not depend on length)", () => {
    const spec = { omega: -0.9, fps: 30, duration: 8, noisePx: 0.3 };
    const withScale = checkOf(spec);
    const without = runTheoryCheck({ points: inertialTrack(spec), setup: { ...defaultView, pxPerM: null }, omegaSet: -0.9, cameraMode: "rotating" });
    expect(without.fMeasured!).toBeCloseTo(withScale.fMeasured!, 10);
    expect(without.fStdError!).toBeCloseTo(withScale.fStdError!, 10);
    expect(without.lengthUnit).toBe("px");
    expect(without.circle!.radiusM).toBeNull();
    expect(without.predictedRadiusM).toBeNull();
    expect(without.circle!.radiusPx).toBeCloseTo(withScale.circle!.radiusPx, 8);
  });

  it("bridges lost frames and frame-time jitter", () => {
    const drop = new Set([5, 40, 41, 90, 150]);
    const spec = { omega: 1, fps: 30, duration: 8, noisePx: 0.3, dropFrames: drop };
    const pts = inertialTrack(spec);
    const r = runTheoryCheck({ points: pts, setup: defaultView, omegaSet: 1, cameraMode: "rotating" });
    expect(r.verdict).toBe("agrees");
    expect(Math.abs(r.fMeasured! / 2 - 1)).toBeLessThan(0.005);
    expect(r.nPoints).toBe(pts.length);
  });
});

describe("the rate in force", () => {
  // The table really turns 5% slower than set: 0.95 rad/s for a set 1 rad/s.
  const spec = { omega: 0.95, fps: 30, duration: 8, noisePx: 0.3 };
  const points = inertialTrack(spec);

  it("disagrees with the set rate when the table runs 5% slow and no calibration is in force", () => {
    const r = runTheoryCheck({ points, setup: defaultView, omegaSet: 1, cameraMode: "rotating" });
    expect(r.verdict).toBe("disagrees");
    expect(r.ratio!).toBeCloseTo(0.95, 2);
    expect(r.reason).toMatch(/no rate calibration is in force/);
  });

  it("agrees once the rate calibration in force gives the true rate, and carries its uncertainty", () => {
    const r = runTheoryCheck({
      points,
      setup: defaultView,
      omegaSet: 1,
      omegaCalibrated: { value: 0.95, stdError: 0.002, calibrationId: 17 },
      cameraMode: "rotating",
    });
    expect(r.verdict).toBe("agrees");
    expect(r.omegaSource).toBe("rate calibration");
    expect(r.calibrationId).toBe(17);
    expect(r.omega).toBe(0.95);
    expect(r.fPredictedStdError).toBeCloseTo(0.004, 12);
    expect(r.reason).toMatch(/rate calibration in force/);
  });

  it("judges by the tolerance setting", () => {
    // 2% slow: inside the default 3%, outside a 1% tolerance (its standard error is far smaller).
    const pts = inertialTrack({ omega: 0.98, fps: 30, duration: 8, noisePx: 0.2 });
    const loose = runTheoryCheck({ points: pts, setup: defaultView, omegaSet: 1, cameraMode: "rotating" });
    const tight = runTheoryCheck({ points: pts, setup: defaultView, omegaSet: 1, cameraMode: "rotating", settings: { tolerance: 0.01 } });
    expect(loose.verdict).toBe("agrees");
    expect(loose.settings.tolerance).toBe(0.03);
    expect(tight.verdict).toBe("disagrees");
    expect(tight.settings.tolerance).toBe(0.01);
    expect(tight.fStdError!).toBeLessThan(0.002);
  });
});

describe("honest uncertainty (Monte Carlo)", () => {
  it("the 95% interval f ± 1.96·SE holds the true f between 90% and 99% of the time over 300 noisy tracks", () => {
    const random = seededRandom(20240611);
    const normal = gaussian(random);
    const trials = 300;
    let covered = 0;
    for (let i = 0; i < trials; i++) {
      const omega = (random() < 0.5 ? -1 : 1) * (0.5 + 1.5 * random());
      const period = Math.PI / Math.abs(omega);
      const heading = 2 * Math.PI * random();
      const speed = (0.03 + 0.05 * random()) * Math.abs(omega);
      const spec: InertialTrackSpec = {
        omega,
        fps: random() < 0.5 ? 25 : 30,
        duration: period * (1.5 + 1.5 * random()),
        drag: 0.08 * random(),
        start: { x: 0.2 * normal(), y: 0.2 * normal() },
        velocity: { x: speed * Math.cos(heading), y: speed * Math.sin(heading) },
        cameraMode: random() < 0.5 ? "lab" : "rotating",
        noisePx: 0.3 + 0.7 * random(),
        random,
      };
      const r = checkOf(spec);
      expect(r.fStdError, r.reason).not.toBeNull();
      if (Math.abs(r.fMeasured! - 2 * omega) <= 1.96 * r.fStdError!) covered++;
    }
    const coverage = covered / trials;
    expect(coverage).toBeGreaterThanOrEqual(0.9);
    expect(coverage).toBeLessThanOrEqual(0.99);
  });
});

describe("bad input: inconclusive with a reason, never a throw", () => {
  const good = { omega: 1, fps: 30, duration: 8, noisePx: 0.3 };
  const goodPoints = inertialTrack(good);
  const base: TheoryCheckInput = { points: goodPoints, setup: defaultView, omegaSet: 1, cameraMode: "rotating" };
  const expectInconclusive = (input: TheoryCheckInput, pattern: RegExp) => {
    const r = runTheoryCheck(input);
    expect(r.verdict).toBe("inconclusive");
    expect(r.reason).toMatch(pattern);
    expect(r.fMeasured === null || Number.isFinite(r.fMeasured)).toBe(true);
    return r;
  };

  it("a track too short to see the turning", () => {
    // 0.5 s of a 3.14 s inertial period.
    expectInconclusive({ ...base, points: goodPoints.slice(0, 16) }, /inertial period/);
  });

  it("too few points", () => {
    expectInconclusive({ ...base, points: goodPoints.slice(0, 9) }, /usable points/);
    expectInconclusive({ ...base, points: [] }, /no points/);
  });

  it("all points collinear", () => {
    const line = Array.from({ length: 200 }, (_, i) => ({ t: i / 30, x: 300 + 2 * i, y: 200 + i }));
    expectInconclusive({ ...base, points: line }, /straight line/);
    const normal = gaussian(seededRandom(3));
    const noisyLine = line.map((p) => ({ ...p, x: p.x + 0.3 * normal(), y: p.y + 0.3 * normal() }));
    expectInconclusive({ ...base, points: noisyLine }, /straight line/);
  });

  it("a tracer that does not move", () => {
    const still = Array.from({ length: 200 }, (_, i) => ({ t: i / 30, x: 400, y: 300 }));
    expectInconclusive({ ...base, points: still }, /barely moves/);
  });

  it("a zero, missing or contradictory rate", () => {
    expectInconclusive({ ...base, omegaSet: 0 }, /zero/);
    expectInconclusive({ ...base, omegaSet: Number.NaN }, /set rate/);
    // A negative rpm with a direction is contradictory: the conversion gives no rate.
    expectInconclusive({ ...base, omegaSet: omegaFromTableRate(-9.5, "ccw") }, /set rate/);
    expectInconclusive({ ...base, omegaCalibrated: { value: -1, stdError: 0.01 } }, /other way/);
    expectInconclusive({ ...base, omegaCalibrated: { value: Number.NaN, stdError: 0.01 } }, /calibration/);
  });

  it("a mirrored view with the wrong sense disagrees and says to check the mirror setting", () => {
    // Filmed from below (mirrored image) but the view setup says it is not mirrored.
    const pts = inertialTrack({ ...good, view: { ...defaultView, mirrored: true } });
    const r = runTheoryCheck({ ...base, points: pts });
    expect(r.verdict).toBe("disagrees");
    expect(r.fMeasured!).toBeLessThan(0);
    expect(r.deflection).toBe("left");
    expect(r.reason).toMatch(/mirror/);
    // Logged counterclockwise while the table turned clockwise: the same honest answer.
    const cw = runTheoryCheck({ ...base, points: inertialTrack({ ...good, omega: -1 }) });
    expect(cw.verdict).toBe("disagrees");
    expect(cw.reason).toMatch(/direction logged/);
  });

  it("missing frame times", () => {
    const noTimes = goodPoints.map((p) => ({ ...p, t: undefined as unknown as number }));
    expectInconclusive({ ...base, points: noTimes }, /no usable frame time/);
    const repeated = goodPoints.map((p) => ({ ...p, t: 0 }));
    expectInconclusive({ ...base, points: repeated }, /repeated time/);
  });

  it("NaN in the setup, the reference time or much of the track", () => {
    expectInconclusive({ ...base, setup: { ...defaultView, centre: { x: Number.NaN, y: 300 } } }, /centre/);
    expectInconclusive({ ...base, setup: { ...defaultView, pxPerM: Number.NaN } }, /scale/);
    expectInconclusive({ ...base, t0: Number.NaN }, /reference time/);
    expectInconclusive({ ...base, settings: { tolerance: Number.NaN } }, /tolerance/);
    expectInconclusive({ ...base, settings: { window: Number.NaN } }, /window/);
    const holes = goodPoints.map((p, i) => (i % 3 === 0 ? { ...p, x: Number.NaN } : p));
    expectInconclusive({ ...base, points: holes }, /not a number/);
  });

  it("leaves out an occasional unusable point and says so", () => {
    const few = goodPoints.map((p, i) => (i === 50 || i === 51 ? { ...p, y: Number.NaN } : p));
    const r = runTheoryCheck({ ...base, points: few });
    expect(r.verdict).toBe("agrees");
    expect(r.nLeftOut).toBe(2);
    expect(r.reason).toMatch(/2 points were left out/);
  });

  it("frames too far apart for the rate", () => {
    // 30 rpm table (inertial period 1 s) filmed at 8 fps.
    expectInconclusive({ ...base, omegaSet: Math.PI, points: inertialTrack({ omega: Math.PI, fps: 8, duration: 4 }) }, /frames per inertial period/);
  });

  it("an uncertainty larger than the tolerance", () => {
    // 0.64 of an inertial period of a 43 px circle, tracked with 2 px noise (at 4 px the track is
    // now too noisy to give an uncertainty at all: next test).
    const noisy = inertialTrack({ ...good, duration: 2, noisePx: 2, velocity: { x: 0.06, y: 0 } });
    const r = expectInconclusive({ ...base, points: noisy }, /uncertainty is/);
    expect(r.fStdError!).toBeGreaterThan(0.03 * 2);
  });

  it("garbage shapes do not throw", () => {
    const garbage = [null, undefined, { t: 1 }, "x", { t: 2, x: 1, y: 1 }] as unknown as TheoryCheckInput["points"];
    expect(() => runTheoryCheck({ ...base, points: garbage })).not.toThrow();
    expect(runTheoryCheck({ ...base, points: garbage }).verdict).toBe("inconclusive");
    expect(runTheoryCheck({ ...base, setup: null as unknown as TheoryCheckInput["setup"] }).verdict).toBe("inconclusive");
    expect(runTheoryCheck({ ...base, cameraMode: "ceiling" as unknown as "lab" }).verdict).toBe("inconclusive");
  });
});
