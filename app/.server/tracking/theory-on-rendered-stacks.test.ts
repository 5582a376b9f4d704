/**
 * The theory check through the production path: rendered frames saved as JPEG the way an upload
 * arrives, tracked by trackFrameStack (decoding, background, detection, linking), and checked on
 * the longest track with the input the run's check builds (view setup centre and scale, set rate,
 * t₀ = 0). A slow float on a short stack is the hard case for the still background.
 */
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { mean } from "simple-statistics";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runTheoryCheck } from "../../lib/analysis/check";
import { Z95 } from "../../lib/analysis/decision";
import type { SyntheticRunSpec } from "../../lib/tracking/synthetic";
import { writeSyntheticStack } from "../../../tests/fixtures/tracking/write-stack";
import { trackFrameStack } from "./track-frame-stack";
import { closeTrackingPool } from "./tracking-pool";

const OMEGA = (10 * 2 * Math.PI) / 60;
const centre = { x: 323.4, y: 177.9 };
const PX_PER_M = 700;

/** 640×360, 40 frames at 30 fps, co-rotating camera, the table at exactly the set rate; a float of
 * peak 150 grey levels on a 10.5 px inertial circle (0.7 px per frame) over image noise σ = 10. */
function slowFloatStack(seed: number): SyntheticRunSpec {
  return {
    width: 640,
    height: 360,
    frames: 40,
    fps: 30,
    seed,
    camera: "rotating",
    omega: OMEGA,
    centre,
    pxPerM: PX_PER_M,
    tankRadiusPx: 168,
    noiseSigma: 10,
    illuminationGradient: 0.12,
    glare: { x: centre.x + 90, y: centre.y - 80, radiusPx: 10, strength: 70 },
    tankMarks: true,
    tracers: [
      { kind: "float", sigmaPx: 3, brightness: 150, path: { kind: "inertial-circle", centre: { x: 0.03, y: -0.02 }, radius: 0.015, phase: 0.4 + seed } },
    ],
  };
}

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-theory-"));
});
afterAll(async () => {
  await closeTrackingPool();
  await rm(dir, { recursive: true, force: true });
});

describe("theory check on rendered, JPEG-encoded, tracked 40-frame stacks (seeds 1–8)", () => {
  it("a correct table: (f − truth)/s averages within ±0.8 over 8 stacks, at least 7 intervals cover the truth, none disagrees", async () => {
    const z: number[] = [];
    const verdicts: string[] = [];
    for (let seed = 1; seed <= 8; seed++) {
      const stack = await writeSyntheticStack(path.join(dir, `seed-${seed}`), slowFloatStack(seed), { format: "jpeg", quality: 90 });
      const tracked = await trackFrameStack({
        files: stack.files,
        times: stack.times,
        setup: { tracer: "float", centre, tankEdge: { cx: centre.x, cy: centre.y, r: 162 }, mirrored: false },
      });
      const longest = [...tracked.tracks].sort((a, b) => b.points.length - a.points.length)[0]!;
      expect(longest.points).toHaveLength(40);
      const r = runTheoryCheck({
        points: longest.points.map(({ t, x, y }) => ({ t, x, y })),
        setup: { centre, pxPerM: PX_PER_M, mirrored: false },
        omegaSet: OMEGA,
        cameraMode: "rotating",
        t0: 0,
        flatTable: false,
        settings: { tolerance: 0.03 },
      });
      expect(r.fMeasured, r.reason).not.toBeNull();
      z.push((r.fMeasured! - 2 * OMEGA) / r.fStdError!);
      verdicts.push(r.verdict);
    }
    const zMean = mean(z);
    console.info(`(f − truth)/s per seed: ${z.map((v) => v.toFixed(2)).join(", ")}; mean ${zMean.toFixed(2)}; verdicts ${verdicts.join(", ")}`);
    // Eight draws: the mean of honest z has a standard error of 0.35.
    expect(Math.abs(zMean)).toBeLessThanOrEqual(0.8);
    expect(z.filter((v) => Math.abs(v) <= Z95).length).toBeGreaterThanOrEqual(7);
    expect(verdicts).not.toContain("disagrees");
  });
});
