/**
 * Honest uncertainty of f on short and noisy tracks, with the float detector's measured error
 * model, and the three inputs that must give no confident interval at all. The rendered stacks
 * that go through detection itself are in app/.server/tracking/theory-on-rendered-stacks.test.ts.
 */
import { mean } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { runTheoryCheck, type TheoryCheckInput } from "./check";
import { Z95 } from "./decision";
import { inertialTrack } from "../../../tests/fixtures/inertial-tracks";
import { gaussian, seededRandom } from "../random";

// 10 rpm counterclockwise, co-rotating camera, a 640×360 view at 700 px/m, 30 fps.
const OMEGA = (10 * 2 * Math.PI) / 60;
const view = { centre: { x: 323.4, y: 177.9 }, pxPerM: 700, mirrored: false };

/**
 * The float detector's errors on rendered 640×360 stacks (JPEG quality 90, float of peak 150 over
 * the water, 36–120 frames, measured on 30 seeds each): 0.020 px per axis at image noise σ = 3
 * grey levels, 0.058–0.066 px at σ = 10, 0.069–0.073 px at σ = 12, lag-1 autocorrelation
 * 0.02–0.18. Modelled as 0.0061 px per grey level of image noise, AR(1) with ρ = 0.15.
 */
const PX_PER_GREY_LEVEL = 0.0061;
const RHO = 0.15;

function detectedTrack(random: () => number, frames: number, imageNoise: number) {
  const heading = 2 * Math.PI * random();
  const speed = 0.02 + 0.06 * random();
  const clean = inertialTrack({
    omega: OMEGA,
    fps: 30,
    duration: (frames - 1) / 30,
    drag: 0.04 * random(),
    start: { x: 0.1 * (random() - 0.5), y: 0.1 * (random() - 0.5) },
    velocity: { x: speed * Math.cos(heading), y: speed * Math.sin(heading) },
    view,
  });
  const normal = gaussian(random);
  const sigma = PX_PER_GREY_LEVEL * imageNoise;
  const innovation = sigma * Math.sqrt(1 - RHO * RHO);
  let ex = sigma * normal();
  let ey = sigma * normal();
  return clean.map((p, i) => {
    if (i > 0) {
      ex = RHO * ex + innovation * normal();
      ey = RHO * ey + innovation * normal();
    }
    return { t: p.t, x: p.x + ex, y: p.y + ey };
  });
}

function check(points: TheoryCheckInput["points"]) {
  return runTheoryCheck({ points, setup: view, omegaSet: OMEGA, cameraMode: "rotating", t0: 0, settings: { tolerance: 0.03 } });
}

function summary(z: number[]) {
  return {
    mean: mean(z),
    coverage: z.filter((v) => Math.abs(v) <= Z95).length / z.length,
  };
}

describe("honest uncertainty with the detector's error model (Monte Carlo, seeds 20261203 and 20261204)", () => {
  it.each([
    ["short tracks, 36–120 frames", 20261203, 36, 120],
    ["long tracks, 240–480 frames", 20261204, 240, 480],
  ] as const)(
    "%s at image noise σ = 2–12 grey levels: mean (f − truth)/s within ±0.3, 95% interval covering 90–99% of 200 tracks",
    (_, seed, shortest, longest) => {
      const random = seededRandom(seed);
      const z: number[] = [];
      for (let i = 0; i < 200; i++) {
        const frames = shortest + Math.floor((longest - shortest + 1) * random());
        const imageNoise = 2 + 10 * random();
        const r = check(detectedTrack(random, frames, imageNoise));
        expect(r.fMeasured, r.reason).not.toBeNull();
        z.push((r.fMeasured! - 2 * OMEGA) / r.fStdError!);
      }
      const { mean, coverage } = summary(z);
      console.info(`seed ${seed}: mean (f − truth)/s ${mean.toFixed(3)}, coverage ${(100 * coverage).toFixed(1)} % of ${z.length}`);
      expect(Math.abs(mean)).toBeLessThanOrEqual(0.3);
      expect(coverage).toBeGreaterThanOrEqual(0.9);
      expect(coverage).toBeLessThanOrEqual(0.99);
    },
  );
});

describe("tracks that cannot give f honestly: inconclusive, with the reason, and no interval", () => {
  const track = (opts: { frames: number; noisePx: number; seed: number; drop?: number }) => {
    const random = seededRandom(opts.seed);
    const dropFrames = new Set<number>();
    for (let i = 1; i < opts.frames - 1; i++) if (random() < (opts.drop ?? 0)) dropFrames.add(i);
    return inertialTrack({
      omega: OMEGA,
      fps: 30,
      duration: (opts.frames - 1) / 30,
      start: { x: 0.02, y: -0.01 },
      velocity: { x: 0.05, y: 0.02 },
      noisePx: opts.noisePx,
      random,
      view,
      dropFrames,
    });
  };
  const expectNoInterval = (r: ReturnType<typeof check>, pattern: RegExp) => {
    expect(r.verdict).toBe("inconclusive");
    expect(r.reason).toMatch(pattern);
    expect(r.fStdError).toBeNull();
    expect(r.interval95).toBeNull();
  };

  it("too short: 20 frames are a fifth of the 3 s inertial period", () => {
    expectNoInterval(check(track({ frames: 20, noisePx: 0.05, seed: 61 })), /lasts 0\.633 s.*at least 25%/);
  });

  it("too noisy: 2 px of tracking noise on a 60-frame track moving 1.3 px per frame", () => {
    expectNoInterval(check(track({ frames: 60, noisePx: 2, seed: 62 })), /too noisy for its speed: tracking noise of [\d.]+ px/);
  });

  it("too many gaps: half the frames of a 120-frame track lost at random", () => {
    expectNoInterval(check(track({ frames: 120, noisePx: 0.05, seed: 63, drop: 0.5 })), /too many missing frames/);
  });
});
