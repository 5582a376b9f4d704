import { describe, expect, it } from "vitest";
import { deflectionSense, fitCoriolis, inertialPeriodFromAngle, predictedRadius, straightLaunchDeflection } from "./coriolis-fit";
import { chooseWindow, smoothTrack } from "./savgol";
import type { InertialTrackSpec } from "../../../tests/fixtures/inertial-tracks";
import { inertialPosition } from "../../../tests/fixtures/inertial-tracks";

/** Rotating-frame positions (m) of an analytic path, sampled at fps. */
function rotatingPath(spec: InertialTrackSpec) {
  const n = Math.floor(spec.duration * spec.fps) + 1;
  return Array.from({ length: n }, (_, i) => ({ t: i / spec.fps, ...inertialPosition(spec, i / spec.fps) }));
}

function fitPath(spec: InertialTrackSpec, options: { correctFilterGain?: boolean; window?: number } = {}) {
  const pts = rotatingPath(spec);
  const window = options.window ?? chooseWindow({ frameInterval: 1 / spec.fps, inertialPeriod: Math.PI / Math.abs(spec.omega), nPoints: pts.length });
  const samples = smoothTrack(pts, { window });
  const fit = fitCoriolis(samples, {
    centrifugal: spec.flatTable ? spec.omega ** 2 : 0,
    correctFilterGain: options.correctFilterGain,
  })!;
  return { fit, samples, window };
}

describe("Coriolis fit on analytic inertial motions (f-plane inertial motion with linear drag, Cushman-Roisin & Beckers 2011 ch. 2, from memory)", () => {
  for (const omega of [1.2, -1.2]) {
    for (const drag of [0, 0.08]) {
      it(`recovers f = 2Ω and the drag rate: Ω = ${omega} rad/s, r = ${drag} s⁻¹, free surface`, () => {
        const { fit } = fitPath({ omega, drag, fps: 30, duration: 6 });
        expect(Math.abs(fit.f / (2 * omega) - 1)).toBeLessThan(1e-5);
        expect(Math.abs(fit.drag - drag)).toBeLessThan(1e-5);
      });
    }
  }

  it("needs the centrifugal term on a flat table, and recovers f with it", () => {
    const spec = { omega: 0.9, drag: 0.02, fps: 30, duration: 8, flatTable: true, start: { x: 0.2, y: 0 }, velocity: { x: 0, y: 0.05 } };
    const { fit } = fitPath(spec);
    expect(Math.abs(fit.f / (2 * spec.omega) - 1)).toBeLessThan(1e-4);
    expect(Math.abs(fit.drag - spec.drag)).toBeLessThan(1e-4);
    const pts = rotatingPath(spec);
    const withoutTerm = fitCoriolis(smoothTrack(pts, { window: 29 }), { centrifugal: 0 })!;
    expect(Math.abs(withoutTerm.f / (2 * spec.omega) - 1)).toBeGreaterThan(0.05);
  });

  // 30 rpm: Ω = π rad/s, f = 2π s⁻¹, inertial period 1 s: the fastest common classroom rate.
  for (const fps of [30, 15]) {
    it(`keeps the bias of f below 0.5% on a fast circle: 30 rpm table filmed at ${fps} fps`, () => {
      const spec = { omega: Math.PI, fps, duration: 3, start: { x: 0.05, y: 0 }, velocity: { x: 0.1, y: 0 } };
      const raw = fitPath(spec, { correctFilterGain: false });
      const corrected = fitPath(spec);
      // The filter alone already meets the bound; dividing out its known gain removes the rest.
      expect(Math.abs(raw.fit.f / (2 * Math.PI) - 1)).toBeLessThan(0.005);
      expect(Math.abs(corrected.fit.f / (2 * Math.PI) - 1)).toBeLessThan(1e-5);
    });
  }

  it("shows why the window is bounded: a window spanning most of a period biases f by several per cent", () => {
    const spec = { omega: Math.PI, fps: 30, duration: 3, velocity: { x: 0.1, y: 0 } };
    const long = fitPath(spec, { correctFilterGain: false, window: 25 });
    expect(long.fit.f / (2 * Math.PI) - 1).toBeGreaterThan(0.02);
  });

  it("returns no fit from too few samples", () => {
    const samples = smoothTrack(rotatingPath({ omega: 1, fps: 30, duration: 0.3 }), { window: 7 });
    expect(fitCoriolis(samples.slice(0, 2))).toBeNull();
  });
});

describe("inertial kinematics", () => {
  it("reads the inertial period π/|Ω| from the unwrapped angle of the velocity, clockwise for Ω > 0", () => {
    for (const omega of [0.7, -0.7]) {
      const { samples } = fitPath({ omega, fps: 30, duration: 10 });
      const angle = inertialPeriodFromAngle(samples)!;
      expect(angle.period).toBeCloseTo(Math.PI / 0.7, 6);
      expect(angle.f).toBeCloseTo(2 * omega, 6);
      expect(deflectionSense(angle.rate)).toBe(omega > 0 ? "right" : "left");
    }
  });

  it("predicts the radius |V|/|f| and the straight-launch deflection R − √(R² − L²) ≈ f L²/(2V) (circle geometry, common practice)", () => {
    expect(predictedRadius(0.1, -2)).toBeCloseTo(0.05, 15);
    // f = 0.2 s⁻¹, V = 0.05 m/s: R = 0.25 m; after L = 0.05 m the exact deflection is
    // 0.25 − √(0.0625 − 0.0025) = 5.0510e-3 m and the short-distance form gives 5.0000e-3 m.
    const d = straightLaunchDeflection(0.05, 0.05, 0.2);
    expect(d.exact).toBeCloseTo(0.25 - Math.sqrt(0.06), 15);
    expect(d.exact).toBeCloseTo(5.051e-3, 6);
    expect(d.shortDistance).toBeCloseTo(5e-3, 15);
    expect(Number.isNaN(straightLaunchDeflection(0.3, 0.05, 0.2).exact)).toBe(true);
  });

  it("names the sense of deflection from the velocity's turning: clockwise is to the right", () => {
    expect(deflectionSense(-0.4)).toBe("right");
    expect(deflectionSense(0.4)).toBe("left");
    expect(deflectionSense(0)).toBeNull();
    expect(deflectionSense(Number.NaN)).toBeNull();
  });
});
