import { describe, expect, it } from "vitest";
import { chooseWindow, positionNoise, savitzkyGolayCoefficients, smoothTrack, typicalFrameInterval } from "./savgol";
import { gaussian, seededRandom } from "../random";

const expectWeights = (actual: number[], numerators: number[], denominator: number) => {
  expect(actual).toHaveLength(numerators.length);
  actual.forEach((w, k) => expect(w).toBeCloseTo(numerators[k]! / denominator, 14));
};

describe("Savitzky–Golay coefficients (Savitzky & Golay 1964, Anal. Chem. 36, 1627; corrected tables of Steinier, Termonia & Deltour 1972, Anal. Chem. 44, 1906)", () => {
  it("quadratic 5-point smoothing is (−3, 12, 17, 12, −3)/35", () => {
    expectWeights(savitzkyGolayCoefficients(5, 2, 0), [-3, 12, 17, 12, -3], 35);
  });

  it("quadratic 7-point smoothing is (−2, 3, 6, 7, 6, 3, −2)/21", () => {
    expectWeights(savitzkyGolayCoefficients(7, 2, 0), [-2, 3, 6, 7, 6, 3, -2], 21);
  });

  it("quadratic 5-point first derivative is (−2, −1, 0, 1, 2)/10", () => {
    expectWeights(savitzkyGolayCoefficients(5, 2, 1), [-2, -1, 0, 1, 2], 10);
  });

  it("quadratic 7-point first derivative is (−3, −2, −1, 0, 1, 2, 3)/28", () => {
    expectWeights(savitzkyGolayCoefficients(7, 2, 1), [-3, -2, -1, 0, 1, 2, 3], 28);
  });

  it("differentiates any polynomial up to the fitted order exactly, for any odd window", () => {
    for (const [window, order] of [
      [9, 4],
      [11, 3],
      [21, 5],
    ] as const) {
      const half = (window - 1) / 2;
      const poly = (k: number) => 0.3 - 1.1 * k + 0.25 * k ** 2 + (order >= 3 ? 0.02 * k ** 3 : 0);
      const ys = Array.from({ length: window }, (_, i) => poly(i - half));
      const apply = (d: number) => savitzkyGolayCoefficients(window, order, d).reduce((s, w, k) => s + w * ys[k]!, 0);
      expect(apply(0)).toBeCloseTo(0.3, 11);
      expect(apply(1)).toBeCloseTo(-1.1, 11);
      expect(apply(2)).toBeCloseTo(0.5, 10);
    }
  });

  it("refuses an even window or an order that does not fit", () => {
    expect(() => savitzkyGolayCoefficients(6, 2)).toThrow(RangeError);
    expect(() => savitzkyGolayCoefficients(5, 5)).toThrow(RangeError);
    expect(() => savitzkyGolayCoefficients(5, 2, 3)).toThrow(RangeError);
  });
});

describe("smoothing a track on its own frame times", () => {
  const dt = 1 / 30;
  const path = (t: number) => ({ x: 0.1 * Math.cos(2 * t) + 0.02 * t, y: -0.1 * Math.sin(2 * t) });

  it("is the classical filter on evenly spaced frames", () => {
    const pts = Array.from({ length: 60 }, (_, i) => ({ t: i * dt, ...path(i * dt) }));
    const samples = smoothTrack(pts, { window: 9, polyOrder: 4 });
    expect(samples).toHaveLength(52);
    const c0 = savitzkyGolayCoefficients(9, 4, 0);
    const c1 = savitzkyGolayCoefficients(9, 4, 1);
    const c2 = savitzkyGolayCoefficients(9, 4, 2);
    for (const s of samples) {
      const win = pts.slice(s.index - 4, s.index + 5);
      expect(s.x).toBeCloseTo(
        win.reduce((a, p, k) => a + c0[k]! * p.x, 0),
        12,
      );
      expect(s.u).toBeCloseTo(win.reduce((a, p, k) => a + c1[k]! * p.x, 0) / dt, 9);
      expect(s.ay).toBeCloseTo(win.reduce((a, p, k) => a + c2[k]! * p.y, 0) / dt ** 2, 6);
    }
  });

  it("keeps derivatives right across a dropped frame, and skips windows over a long gap", () => {
    // A quartic path is reproduced exactly by an order-4 local fit, whatever the frame times.
    const quartic = (t: number) => 0.05 + 0.2 * t - 0.3 * t ** 2 + 0.1 * t ** 3 - 0.05 * t ** 4;
    const times = Array.from({ length: 80 }, (_, i) => i * dt).filter((_, i) => i !== 20 && !(i >= 50 && i < 58));
    const pts = times.map((t) => ({ t, x: quartic(t), y: 2 * quartic(t) }));
    const samples = smoothTrack(pts, { window: 11, polyOrder: 4 });
    for (const s of samples) {
      expect(s.u).toBeCloseTo(0.2 - 0.6 * s.t + 0.3 * s.t ** 2 - 0.2 * s.t ** 3, 9);
      expect(s.ax).toBeCloseTo(-0.6 + 0.6 * s.t - 0.6 * s.t ** 2, 7);
    }
    // The single dropped frame (t = 20 dt) is bridged; the eight-frame gap is not.
    expect(samples.some((s) => Math.abs(s.t - 20 * dt) < 6 * dt)).toBe(true);
    const overGap = samples.filter((s) => {
      const first = pts[s.weights.first]!.t;
      const last = pts[s.weights.first + 10]!.t;
      return first < 50 * dt && last > 57 * dt;
    });
    expect(overGap).toHaveLength(0);
  });

  it("estimates the tracking noise it smooths away", () => {
    const normal = gaussian(seededRandom(7));
    const pts = Array.from({ length: 600 }, (_, i) => {
      const p = path(i * dt);
      return { t: i * dt, x: p.x + 0.002 * normal(), y: p.y + 0.002 * normal() };
    });
    const samples = smoothTrack(pts, { window: 15 });
    expect(positionNoise(pts, samples)).toBeGreaterThan(0.0018);
    expect(positionNoise(pts, samples)).toBeLessThan(0.0022);
  });
});

describe("window choice", () => {
  it("spans about 0.3 of the inertial period, odd, between 7 and 101 frames and at most a third of the track", () => {
    // 10 rpm table: inertial period 3 s; at 30 fps that is 90 frames, 0.3 of it 27.
    expect(chooseWindow({ frameInterval: 1 / 30, inertialPeriod: 3 })).toBe(27);
    expect(chooseWindow({ frameInterval: 1 / 15, inertialPeriod: 1 })).toBe(7);
    expect(chooseWindow({ frameInterval: 1 / 60, inertialPeriod: 30 })).toBe(101);
    expect(chooseWindow({ frameInterval: 1 / 30, inertialPeriod: 3, nPoints: 45 })).toBe(15);
  });

  it("reads the typical frame interval from the median, so a lost frame does not move it", () => {
    expect(typicalFrameInterval([0, 0.04, 0.08, 0.16, 0.2, 0.24])).toBeCloseTo(0.04, 12);
  });
});
