/**
 * The rate read from the footage through the production path: rendered frames written as JPEG
 * the way an upload arrives, read back by the rate pass, and through the tracking job of a run.
 * Each table truly turns 4 % faster than its set rate.
 */
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { TrackingJob, ViewSetup } from "../db";
import { smallLab } from "../test-support";
import { createRun } from "../runs/service";
import { receiveFrameFile } from "../uploads/frames";
import { enqueueTracking, stopTrackingQueue, whenTrackingIdle } from "../jobs/tracking-queue";
import { tableRateSummary } from "../runs/rate-from-footage";
import { measureRateFromFrames } from "./rate-pass";
import { renderRunFrames, type SyntheticRunSpec } from "~/lib/tracking/synthetic";
import { rpmToRadPerS } from "~/lib/analysis/units";
import { writeSyntheticStack } from "../../../tests/fixtures/tracking/write-stack";

const setRpm = 15;
const trueOmega = rpmToRadPerS(setRpm * 1.04);
const omegaSet = rpmToRadPerS(setRpm);
const centre = { x: 160.3, y: 119.6 };
const markAt = (radius: number, angle: number) => ({ x: centre.x + radius * Math.cos(angle), y: centre.y - radius * Math.sin(angle) });

function stack(camera: "lab" | "rotating", frames: number, extra: Partial<SyntheticRunSpec> = {}): SyntheticRunSpec {
  return {
    width: 320,
    height: 240,
    frames,
    fps: 30,
    seed: 5,
    camera,
    omega: trueOmega,
    centre,
    pxPerM: 600,
    tankRadiusPx: 80,
    noiseSigma: 3,
    tankMarks: false,
    tracers: [{ kind: "float", sigmaPx: 2.5, brightness: 120, path: { kind: "inertial-circle", centre: { x: 0.01, y: 0 }, radius: 0.05, phase: 0 } }],
    ...extra,
  };
}

let dir: string;
let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-rate-"));
  lab = await smallLab();
});
afterAll(async () => {
  await stopTrackingQueue();
  await rm(dir, { recursive: true, force: true });
});

describe("the table's rate from JPEG frames, by the rate pass", () => {
  it("a lab-fixed camera with a mark on the table: within 2 standard errors of the true rate, far from the set rate", async () => {
    const spec = stack("lab", 120, { tableMark: { radiusPx: 100, angle: 0.7, sizePx: 5 } });
    const written = await writeSyntheticStack(path.join(dir, "lab"), spec, { format: "jpeg", quality: 90 });
    const r = await measureRateFromFrames({
      files: written.files,
      times: written.times,
      cameraMode: "lab",
      centre,
      mirrored: false,
      tankEdge: { cx: centre.x, cy: centre.y, r: 80 },
      rateMark: markAt(100, 0.7),
      omegaSet,
    });
    expect(r.measuredOmegaNote).toBeNull();
    expect(r.measuredOmegaMethod).toBe("table mark");
    expect(Math.abs(r.measuredOmega! - trueOmega)).toBeLessThanOrEqual(2 * r.measuredOmegaSe!);
    expect(Math.abs(r.measuredOmega! - omegaSet)).toBeGreaterThan(10 * r.measuredOmegaSe!);
  });

  it("a co-rotating camera: the room beyond the tank edge turning past", async () => {
    const spec = stack("rotating", 120, { surroundingsFromPx: 92 });
    const written = await writeSyntheticStack(path.join(dir, "rotating"), spec, { format: "jpeg", quality: 90 });
    const r = await measureRateFromFrames({
      files: written.files,
      times: written.times,
      cameraMode: "rotating",
      centre,
      mirrored: false,
      tankEdge: { cx: centre.x, cy: centre.y, r: 80 },
      rateMark: null,
      omegaSet,
    });
    expect(r.measuredOmegaMethod).toBe("surroundings");
    expect(Math.abs(r.measuredOmega! - trueOmega)).toBeLessThanOrEqual(2 * r.measuredOmegaSe!);
    expect(Math.abs(r.measuredOmega! - omegaSet)).toBeGreaterThan(10 * r.measuredOmegaSe!);
  });

  it("stops at the first frame when the view shows no surroundings, without reading the others", async () => {
    const written = await writeSyntheticStack(path.join(dir, "filled"), stack("rotating", 1), { format: "jpeg", quality: 90 });
    // The second file does not exist: reading it would end in "could not be read", not the view's reason.
    const r = await measureRateFromFrames({
      files: [...written.files, path.join(dir, "filled", "never-written.jpg")],
      times: [...written.times, 1],
      cameraMode: "rotating",
      centre,
      mirrored: false,
      tankEdge: { cx: centre.x, cy: centre.y, r: 118 },
      rateMark: null,
      omegaSet,
    });
    expect(r.measuredOmegaMethod).toBe("surroundings");
    expect(r.measuredOmegaNote).toMatch(/tank fills the frame/);
  });

  it("says why when the view allows no reading", async () => {
    const base = { files: [], times: [], centre, mirrored: false, omegaSet };
    expect((await measureRateFromFrames({ ...base, cameraMode: "lab", tankEdge: null, rateMark: null })).measuredOmegaNote).toMatch(/No mark on the table/);
    expect((await measureRateFromFrames({ ...base, cameraMode: "rotating", tankEdge: null, rateMark: null })).measuredOmegaNote).toMatch(
      /tank edge is not marked/,
    );
  });
});

describe("the tracking job reads the rate of a lab-fixed run with a marked table", () => {
  it("stores it on the job, and the run page flags the 4 %", async () => {
    const run = await createRun(lab.runInput({ setRateRpm: setRpm, cameraMode: "lab" }), lab.tech);
    await renderRunFrames(stack("lab", 90, { tableMark: { radiusPx: 100, angle: 2.1, sizePx: 5 } }), async (f) => {
      const jpeg = await sharp(Buffer.from(f.data), { raw: { width: f.width, height: f.height, channels: 3 } })
        .jpeg({ quality: 92 })
        .toBuffer();
      await receiveFrameFile(run, new File([new Uint8Array(jpeg)], `frame_${f.index}.jpg`), null);
    });
    await run.reload();
    const mark = markAt(100, 2.1);
    await ViewSetup.create({
      runId: run.id,
      cameraId: run.cameraId,
      centreXPx: centre.x,
      centreYPx: centre.y,
      tankEdgeXPx: centre.x,
      tankEdgeYPx: centre.y,
      tankEdgeRPx: 80,
      scalePxPerM: 600,
      scalePoints: null,
      mirrored: false,
      rateMarkXPx: mark.x,
      rateMarkYPx: mark.y,
      createdById: lab.tech.id,
    });
    const queued = await enqueueTracking(run, lab.tech.id);
    await whenTrackingIdle();
    const job = (await TrackingJob.findByPk(queued.id))!;
    expect(job.state).toBe("done");
    expect(job.measuredOmegaMethod).toBe("table mark");
    expect(job.measuredOmegaPoints).toBe(90);
    expect(Math.abs(job.measuredOmega! - trueOmega)).toBeLessThanOrEqual(2 * job.measuredOmegaSe!);
    const summary = await tableRateSummary(run);
    expect(summary.measured!.rpm).toBeCloseTo(setRpm * 1.04, 1);
    expect(summary.disagreement).toMatch(/^The table turned at 15\.\d+ ± 0\.\d+ rpm, not the set 15 rpm/);
  });
});
