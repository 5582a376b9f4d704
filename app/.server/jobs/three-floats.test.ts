/**
 * A three-float run through the production path: rendered frames uploaded as JPEG, tracked by the
 * job queue, and checked by checkRun: three per-track checks and one combined verdict.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { Track } from "../db";
import { smallLab } from "../test-support";
import { floatStackViewSetup } from "./testing";
import { createRun } from "../runs/service";
import { receiveFrameFile } from "../uploads/frames";
import { enqueueTracking, stopTrackingQueue, whenTrackingIdle } from "./tracking-queue";
import { currentCheck } from "../runs/current-check";
import { storedCheck } from "../runs/theory";
import { renderRunFrames } from "~/lib/tracking/synthetic";
import { floatStackSpec } from "~/lib/tracking/float-stack";

let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  lab = await smallLab();
});
afterAll(async () => {
  await stopTrackingQueue();
});

/** The float stack (15 rpm, co-rotating camera, 600 px/m) with three floats on separate inertial circles. */
function threeFloats(frames: number) {
  const base = floatStackSpec(frames, { seed: 17 });
  const float = (cx: number, cy: number, phase: number) =>
    ({ kind: "float", sigmaPx: 2.5, brightness: 120, path: { kind: "inertial-circle", centre: { x: cx, y: cy }, radius: 0.025, phase } }) as const;
  return { ...base, tracers: [float(-0.06, 0.04, 0), float(0.0, -0.07, 1.5), float(0.07, 0.05, 3)] };
}

describe("a run with three floats", () => {
  it("is tracked into three tracks, each checked on its own, and judged on their combined f", { timeout: 180_000 }, async () => {
    const run = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
    await renderRunFrames(threeFloats(90), async (f) => {
      const jpeg = await sharp(Buffer.from(f.data), { raw: { width: f.width, height: f.height, channels: 3 } })
        .jpeg({ quality: 92 })
        .toBuffer();
      await receiveFrameFile(run, new File([new Uint8Array(jpeg)], `frame_${f.index}.jpg`), null);
    });
    await run.reload();
    await floatStackViewSetup(run, lab.tech.id);
    await enqueueTracking(run, lab.tech.id);
    await whenTrackingIdle();
    const tracks = await Track.findAll({ where: { runId: run.id }, order: [["number", "ASC"]] });
    // The three floats are followed through every frame; the tracker may add a few frames' worth of
    // something else (here a 7-point track), which the check leaves out as too short.
    const floats = tracks.filter((t) => t.pointCount >= 89).map((t) => t.number);
    expect(floats).toEqual([1, 2, 3]);
    const { check } = await currentCheck(run.id);
    const stored = storedCheck(check!);
    expect(stored.checks.map((c) => c.trackNumber)).toEqual(tracks.map((t) => t.number));
    for (const c of stored.checks) {
      if (floats.includes(c.trackNumber!)) expect([c.combined, c.flagged], `track ${c.trackNumber}`).toEqual([true, false]);
      else expect(c, `track ${c.trackNumber}`).toMatchObject({ combined: false, verdict: "inconclusive", fMeasured: null });
    }
    expect(stored.combination).toMatchObject({ n: 3, of: tracks.length, consistent: true });
    expect(stored.combination!.words).toMatch(/^The three floats agree with each other/);
    expect(stored.result.verdict).toBe("agrees");
    expect(stored.result.reason).toMatch(/weighted mean of three floats/);
    expect(check!.verdict).toBe("agrees");
    // The combined error is smaller than the best single track's.
    expect(stored.result.fStdError!).toBeLessThan(Math.min(...stored.checks.filter((c) => c.combined).map((c) => c.fStdError!)));
  });
});
