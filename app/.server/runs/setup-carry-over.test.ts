import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import sharp from "sharp";
import { callApi } from "../../../tests/support/api-contract";
import { Equipment, TheoryCheck, TrackingJob, ViewSetup, sequelize, type Run } from "../db";
import { createApiToken } from "../auth/api-tokens";
import { smallLab } from "../test-support";
import { createRun } from "./service";
import { whenRechecksIdle } from "./rechecks";
import { receiveFrameFile } from "../uploads/frames";
import { floatStackViewSetup, renderStack, tracksOf } from "../jobs/testing";
import { stopTrackingQueue, whenTrackingIdle } from "../jobs/tracking-queue";
import { carryOverOffer, carrySetupOver } from "./setup-carry-over";
import { action as framesAction } from "~/routes/api/run-frames";
import { streamPlan } from "~/lib/frame-stream";

/**
 * A view setup carried over from the camera's last run (Decision 67): an opt-in of the upload, so
 * that a run's frames can be tracked as they land without a setup made on them first.
 */
const FRAMES = 30;
let lab: Awaited<ReturnType<typeof smallLab>>;
let token: string;
let stack: File[];

beforeAll(async () => {
  lab = await smallLab();
  token = (await createApiToken(lab.tech.id, "carry-over")).token;
  stack = await renderStack(FRAMES);
}, 120_000);

afterAll(async () => {
  await whenRechecksIdle();
  await whenTrackingIdle();
  await stopTrackingQueue();
});

function upload(run: Run, file: File, fields: Record<string, string> = {}) {
  const form = new FormData();
  form.set("file", file);
  for (const [k, v] of Object.entries(fields)) form.set(k, v);
  return callApi(
    framesAction,
    new Request(`http://localhost/api/v1/runs/${run.id}/frames`, { method: "POST", headers: { Authorization: `Bearer ${token}` }, body: form }),
    { runId: String(run.id) },
  );
}

/** A finished earlier run of the camera: its frames and its view setup. */
async function earlierRun(cameraId = lab.camera.id) {
  const run = await createRun(lab.runInput({ cameraId }), lab.tech);
  for (const file of stack.slice(0, 3)) await receiveFrameFile(run, file, null);
  await floatStackViewSetup(run, lab.tech.id);
  return run.reload();
}

const setupValues = (s: ViewSetup | null) =>
  s && {
    centre: [s.centreXPx, s.centreYPx],
    edge: [s.tankEdgeXPx, s.tankEdgeYPx, s.tankEdgeRPx],
    scale: [s.scalePxPerM, s.scalePoints],
    mirrored: s.mirrored,
    mark: [s.rateMarkXPx, s.rateMarkYPx],
  };

describe("the camera's last view setup carried over on upload", () => {
  it("a streamed stack on a run with no setup: the setup is copied with the first frame, every frame is tracked as it lands, and the verdict comes by itself", async () => {
    const before = await earlierRun();
    const run = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
    expect(await carryOverOffer(run)).toEqual({ fromRunId: before.id, width: before.frameWidthPx, height: before.frameHeightPx });

    const plan = streamPlan(
      stack.map((f) => ({ name: f.name, video: false })),
      { framesInRun: 0, setup: "carried over" },
    );
    if (!plan.stream) throw new Error(plan.why);
    const answers: unknown[] = [];
    for (const { file, frameNumber } of plan.sends) {
      const res = await upload(run, stack[file]!, { frameNumber: String(frameNumber), expectedFrames: String(plan.expectedFrames), carryOverSetup: "yes" });
      expect(res.status).toBe(201);
      answers.push(((await res.json()) as { setupCarriedOver?: unknown }).setupCarriedOver);
    }
    expect(answers[0]).toEqual({ carried: true, fromRunId: before.id });
    expect(answers.slice(1).every((a) => (a as { alreadySet?: boolean }).alreadySet === true)).toBe(true);
    expect(setupValues(await ViewSetup.findOne({ where: { runId: run.id } }))).toEqual(setupValues(await ViewSetup.findOne({ where: { runId: before.id } })));
    // The run now has a setup of its own: nothing more is offered.
    expect(await carryOverOffer(await run.reload())).toBeNull();

    // No call to the tracking route: the last frame started the job, and the check followed it.
    await whenTrackingIdle();
    await whenRechecksIdle();
    expect((await TrackingJob.findOne({ where: { runId: run.id } }))?.state).toBe("done");
    expect((await tracksOf(run.id)).length).toBeGreaterThan(0);
    expect(await TheoryCheck.count({ where: { runId: run.id } })).toBe(1);
    expect((await run.reload()).verdict).not.toBeNull();
  }, 180_000);

  it("without the opt-in nothing is copied, and the stack waits for a setup", async () => {
    await earlierRun();
    const run = await createRun(lab.runInput(), lab.tech);
    for (const [i, file] of stack.slice(0, 3).entries()) {
      const res = await upload(run, file, { frameNumber: String(i + 1), expectedFrames: "3" });
      expect(res.status).toBe(201);
      expect(((await res.json()) as { setupCarriedOver?: unknown }).setupCarriedOver).toBeUndefined();
    }
    await whenTrackingIdle();
    expect(await ViewSetup.count({ where: { runId: run.id } })).toBe(0);
    expect(await TrackingJob.count({ where: { runId: run.id } })).toBe(0);
  });

  it("a run's own setup is kept; a camera whose last setup was made on frames of another size gives none, and says why", async () => {
    const before = await earlierRun();
    const own = await createRun(lab.runInput(), lab.tech);
    await receiveFrameFile(own, stack[0]!, null);
    await ViewSetup.create({
      runId: own.id,
      cameraId: own.cameraId,
      centreXPx: 1,
      centreYPx: 2,
      tankEdgeXPx: null,
      tankEdgeYPx: null,
      tankEdgeRPx: null,
      scalePxPerM: null,
      scalePoints: null,
      mirrored: true,
      createdById: lab.tech.id,
    });
    const res = await upload(own, stack[1]!, { carryOverSetup: "yes" });
    expect(((await res.json()) as { setupCarriedOver?: unknown }).setupCarriedOver).toMatchObject({ carried: false, alreadySet: true });
    expect(setupValues(await ViewSetup.findOne({ where: { runId: own.id } }))?.centre).toEqual([1, 2]);
    // The later stills of a stream find the setup without queueing on the run's lock.
    const transactions = vi.spyOn(sequelize, "transaction");
    try {
      expect(await carrySetupOver(own.id, lab.tech.id)).toMatchObject({ carried: false, alreadySet: true });
      expect(transactions).not.toHaveBeenCalled();
    } finally {
      transactions.mockRestore();
    }

    // Frames of another size (a crop, another mode): the earlier setup would put the marks in the wrong place.
    const camera = await Equipment.findByPk(before.cameraId);
    const run = await createRun(lab.runInput({ cameraId: camera!.id }), lab.tech);
    const bigger = await sharp(Buffer.from(await stack[0]!.arrayBuffer()))
      .resize({ width: before.frameWidthPx! * 2 })
      .jpeg()
      .toBuffer();
    const answer = await upload(run, new File([new Uint8Array(bigger)], "big.jpg"), { carryOverSetup: "yes" });
    expect(answer.status).toBe(201);
    const carried = ((await answer.json()) as { setupCarriedOver?: { carried: boolean; message?: string } }).setupCarriedOver;
    expect(carried?.carried).toBe(false);
    expect(carried?.message).toMatch(/No earlier run of this camera has a view setup made on \d+ × \d+ px frames/);
    expect(await ViewSetup.count({ where: { runId: run.id } })).toBe(0);
    expect(await carryOverOffer(await run.reload())).toBeNull();
  });

  it("brings the camera's tilt marks (rim points, known points) with the rest of its setup", async () => {
    const before = await earlierRun();
    const rim = JSON.stringify(
      [0, 72, 144, 216, 288].map((deg) => ({ x: 160 + 90 * Math.cos((deg * Math.PI) / 180), y: 120 + 88 * Math.sin((deg * Math.PI) / 180) })),
    );
    const known = JSON.stringify([{ x: 70, y: 120, tableXCm: -10, tableYCm: 0 }]);
    await ViewSetup.update({ rimPoints: rim, knownPoints: known }, { where: { runId: before.id } });
    const run = await createRun(lab.runInput(), lab.tech);
    const res = await upload(run, stack[0]!, { carryOverSetup: "yes" });
    expect(res.status).toBe(201);
    const copied = await ViewSetup.findOne({ where: { runId: run.id } });
    expect(copied?.rimPoints).toBe(rim);
    expect(copied?.knownPoints).toBe(known);
  });

  it("refuses any other value of carryOverSetup with 400 invalid_carry_over, and stores nothing", async () => {
    await earlierRun();
    const run = await createRun(lab.runInput(), lab.tech);
    const res = await upload(run, stack[0]!, { carryOverSetup: "true" });
    expect(res.status).toBe(400);
    expect(((await res.json()) as { error: { code: string } }).error.code).toBe("invalid_carry_over");
    expect(await ViewSetup.count({ where: { runId: run.id } })).toBe(0);
    expect((await run.reload()).frameCount).toBe(0);
  });
});
