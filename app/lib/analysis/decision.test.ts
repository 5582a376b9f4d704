import { mean } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { runTheoryCheck } from "./check";
import { decide, Z95 } from "./decision";
import { inertialTrack } from "../../../tests/fixtures/inertial-tracks";
import { seededRandom } from "../random";

// 10 rpm counterclockwise, co-rotating camera, a 640×360 view.
const OMEGA_SET = (10 * 2 * Math.PI) / 60;
const view = { centre: { x: 320, y: 180 }, pxPerM: 600, mirrored: false };
const TOLERANCE = 0.03;

/** One simulated check: a free tracer tracked with white positional noise. */
function simulate(random: () => number, opts: { frames: number; noisePx: number; omegaTrue: number; fps?: number }) {
  const fps = opts.fps ?? 30;
  const heading = 2 * Math.PI * random();
  const speed = 0.04 + 0.04 * random();
  const points = inertialTrack({
    omega: opts.omegaTrue,
    fps,
    duration: (opts.frames - 1) / fps,
    drag: 0.05 * random(),
    start: { x: 0.1 * (random() - 0.5), y: 0.1 * (random() - 0.5) },
    velocity: { x: speed * Math.cos(heading), y: speed * Math.sin(heading) },
    noisePx: opts.noisePx,
    random,
    view,
  });
  return runTheoryCheck({ points, setup: view, omegaSet: OMEGA_SET, cameraMode: "rotating", settings: { tolerance: TOLERANCE } });
}

describe("the decision rule on the 95% interval of d = (f measured − f predicted)/f predicted", () => {
  it("agrees only with the whole interval inside ±τ, disagrees only with it wholly outside", () => {
    expect(decide({ d: 0.01, s: 0.01 / Z95 - 1e-9, tolerance: 0.02 }).verdict).toBe("agrees");
    expect(decide({ d: 0.01, s: 0.011 / Z95, tolerance: 0.02 }).verdict).toBe("inconclusive");
    // Within two standard errors of zero but outside the tolerance: no longer "agrees".
    expect(decide({ d: 0.05, s: 0.03, tolerance: 0.03 }).verdict).toBe("inconclusive");
    expect(decide({ d: -0.05, s: 0.009 / Z95, tolerance: 0.04 }).verdict).toBe("disagrees");
    expect(decide({ d: -0.05, s: 0.011 / Z95, tolerance: 0.04 }).verdict).toBe("inconclusive");
    expect(decide({ d: 0, s: 1, tolerance: 0.03, wrongSense: true }).verdict).toBe("disagrees");
    const r = decide({ d: 0.02, s: 0.01, tolerance: 0.03 });
    expect(r.low).toBeCloseTo(0.02 - Z95 * 0.01, 12);
    expect(r.high).toBeCloseTo(0.02 + Z95 * 0.01, 12);
  });

  it("says how much smaller the standard error, or how much longer the track, would decide it", () => {
    // Gap to the tolerance 0.01: s must fall to 0.01/1.96, 1.96× smaller than 0.01.
    const r = decide({ d: 0.02, s: 0.01, tolerance: 0.03, nPoints: 100, periods: 2 });
    expect(r.verdict).toBe("inconclusive");
    expect(r.advice).toMatch(/1\.96× smaller/);
    expect(r.advice).toMatch(/about 196 frames instead of 100/);
    // Shorter than a period, s falls at least as N^−1.5: (1.96)^(2/3) = 1.566.
    const short = decide({ d: 0.02, s: 0.01, tolerance: 0.03, nPoints: 40, periods: 0.4 });
    expect(short.advice).toMatch(/1\.57× longer/);
  });

  it("puts the rule and the interval into the result and the reason", () => {
    const r = simulate(seededRandom(4101), { frames: 240, noisePx: 0.2, omegaTrue: OMEGA_SET });
    expect(r.verdict, r.reason).toBe("agrees");
    expect(r.interval95!.low).toBeGreaterThanOrEqual(-TOLERANCE);
    expect(r.interval95!.high).toBeLessThanOrEqual(TOLERANCE);
    expect(r.reason).toMatch(/95% interval of the difference/);
    expect(r.decisionRule).toMatch(/wholly within/);
    const short = simulate(seededRandom(4102), { frames: 40, noisePx: 0.3, omegaTrue: OMEGA_SET });
    expect(short.verdict, short.reason).toBe("inconclusive");
    expect(short.reason).toMatch(/frames instead of 40/);
  });
});

describe("honest uncertainty on short noisy tracks (Monte Carlo, seed 20261202)", () => {
  it("(f − truth)/s has mean within ±0.3 and its 95% interval covers the truth 90–99% over 240 tracks of 36–120 frames, 0.05–0.3 px noise", () => {
    const random = seededRandom(20261202);
    const z: number[] = [];
    let judged = 0;
    for (let i = 0; i < 240; i++) {
      const frames = 36 + Math.floor(85 * random());
      const noisePx = 0.05 + 0.25 * random();
      const r = simulate(random, { frames, noisePx, omegaTrue: OMEGA_SET });
      if (r.fMeasured === null || r.fStdError === null) {
        expect(r.verdict).toBe("inconclusive");
        continue;
      }
      judged++;
      z.push((r.fMeasured - 2 * OMEGA_SET) / r.fStdError);
    }
    expect(judged).toBeGreaterThanOrEqual(200);
    const zMean = mean(z);
    const coverage = z.filter((v) => Math.abs(v) <= Z95).length / z.length;
    expect(Math.abs(zMean)).toBeLessThanOrEqual(0.3);
    expect(coverage).toBeGreaterThanOrEqual(0.9);
    expect(coverage).toBeLessThanOrEqual(0.99);
  });
});

describe("operating characteristic of the verdict (Monte Carlo, 200 tracks each)", () => {
  const run = (seed: number, omegaTrue: number, frames: [number, number], noise: [number, number]) => {
    const random = seededRandom(seed);
    const counts = { agrees: 0, disagrees: 0, inconclusive: 0 };
    let maxS = 0;
    for (let i = 0; i < 200; i++) {
      const n = frames[0] + Math.floor((frames[1] - frames[0] + 1) * random());
      const noisePx = noise[0] + (noise[1] - noise[0]) * random();
      const r = simulate(random, { frames: n, noisePx, omegaTrue });
      counts[r.verdict]++;
      if (r.fStdError !== null) maxS = Math.max(maxS, r.fStdError / Math.abs(r.fPredicted!));
    }
    return { counts, maxS };
  };

  it("table at its set rate with s ≤ τ/4: at least 95% agree (seed 3101)", () => {
    const { counts, maxS } = run(3101, OMEGA_SET, [150, 300], [0.05, 0.3]);
    expect(maxS).toBeLessThanOrEqual(TOLERANCE / 4);
    expect(counts.agrees / 200).toBeGreaterThanOrEqual(0.95);
  });

  it("table 2τ fast: at least 95% disagree (seed 3102)", () => {
    const { counts } = run(3102, OMEGA_SET * (1 + 2 * TOLERANCE), [150, 300], [0.05, 0.3]);
    expect(counts.disagrees / 200).toBeGreaterThanOrEqual(0.95);
  });

  it("truth 1.1τ off, short and long tracks: at most 2.5% agree (seeds 3103, 3104)", () => {
    const slow = run(3103, OMEGA_SET * (1 - 1.1 * TOLERANCE), [48, 300], [0.05, 0.3]);
    const fast = run(3104, OMEGA_SET * (1 + 1.1 * TOLERANCE), [48, 300], [0.05, 0.3]);
    expect(slow.counts.agrees / 200).toBeLessThanOrEqual(0.025);
    expect(fast.counts.agrees / 200).toBeLessThanOrEqual(0.025);
    // The rule says "inconclusive" rather than guess: some are, so the test sees the middle band.
    expect(slow.counts.inconclusive + fast.counts.inconclusive).toBeGreaterThan(0);
  });
});
