import { afterAll, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { Op } from "sequelize";
import { Frame, migrate, Run, RunHistory, Track, TrackingJob, ViewSetup } from "../db";
import { stopTrackingQueue, whenTrackingIdle } from "../jobs/tracking-queue";
import { receiveFrameFile } from "../uploads/frames";
import { runKey, runPrefix, store } from "../storage";
import { createRun } from "./service";
import { checkRun } from "./theory";
import { currentCheck } from "./current-check";
import { holdRechecks, whenRechecksIdle } from "./rechecks";
import { signOffRun } from "./record";
import { removeFrameSelection } from "./frame-removal";
import { doneTrackingJob, plainViewSetup, runInput, seedRunLab, type RunLab } from "./testing";
import type { CurrentUser } from "../auth/permissions";

let lab: RunLab;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
});
afterAll(async () => {
  await whenRechecksIdle();
  await whenTrackingIdle();
  await stopTrackingQueue();
});

const png = (shade: number) =>
  sharp({ create: { width: 64, height: 48, channels: 3, background: { r: shade * 20, g: 40, b: 90 } } })
    .png()
    .toBuffer();

/** A run with `n` stored frames (frame_1 … frame_n), a view setup, a finished job's track and a current check. */
async function checkedRunWithFrames(user: CurrentUser, n = 5) {
  const run = await createRun(runInput(lab), user);
  for (let i = 1; i <= n; i++) await receiveFrameFile(run, new File([new Uint8Array(await png(i))], `frame_${i}.png`), null);
  await run.reload();
  await plainViewSetup(run, user.id, { centre: { x: 32, y: 24 }, pxPerM: 1000 });
  const job = await doneTrackingJob(run, user.id, n);
  const f = 2 * 1.0472; // 10 rpm
  const points = Array.from({ length: 180 }, (_, i) => {
    const t = i / 30;
    return [t, 32 + 20 + 7 * Math.cos(-f * t), 24 - 7 * Math.sin(-f * t), i];
  });
  await Track.create({ runId: run.id, jobId: job.id, number: 1, points: JSON.stringify(points), pointCount: points.length, detectedShare: 1, jitterPx: 0 });
  await run.update({ state: "tracked" });
  const check = await checkRun(run.id, user.id);
  if (!check) throw new Error("the fixture's run could not be checked");
  const frames = await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] });
  return { run: (await Run.findByPk(run.id))!, check, frames, job };
}

const stackOf = async (runId: number) =>
  (await Frame.findAll({ where: { runId }, order: [["position", "ASC"]] })).map((f) => [f.position, f.originalName] as [number, string]);
const inStore = async (runId: number, name: string) => (await store().head(runKey(runId, name))) !== null;

describe("removing frames from a run", () => {
  it("takes one frame out, moves the later ones up, removes its files, and the check goes out of date and is redone by tracking again", async () => {
    const { run, frames, job } = await checkedRunWithFrames(lab.technician);
    const third = frames[2]!;
    expect(await inStore(run.id, third.storedName)).toBe(true);

    const release = holdRechecks();
    let result: Awaited<ReturnType<typeof removeFrameSelection>>;
    try {
      result = await removeFrameSelection(run.id, lab.technician, { from: 2, to: 2 }, { frameCount: 5 });
      expect(result).toEqual({ removed: [{ id: third.id, position: 2, name: "frame_3.png" }], frameCount: 4, retracking: true });
      expect(await stackOf(run.id)).toEqual([
        [0, "frame_1.png"],
        [1, "frame_2.png"],
        [2, "frame_4.png"],
        [3, "frame_5.png"],
      ]);
      // Stills without their own times keep the time they had (position / frame rate): the gap stays a gap.
      const times = (await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] })).map((f) => f.timeS);
      expect(times).toEqual([0, 1 / 30, 3 / 30, 4 / 30]);
      // Its image and thumbnail are gone; the other frames' files are all still there.
      expect(await inStore(run.id, third.storedName)).toBe(false);
      expect(await inStore(run.id, third.thumbName!)).toBe(false);
      for (const f of frames.filter((f) => f.id !== third.id)) {
        expect(await inStore(run.id, f.storedName)).toBe(true);
        expect(await inStore(run.id, f.thumbName!)).toBe(true);
      }
      const fresh = (await Run.findByPk(run.id))!;
      expect([fresh.frameCount, fresh.verdict, fresh.frameWidthPx]).toEqual([4, null, 64]);
      const stale = await currentCheck(run.id);
      expect(stale.status).toBe("out_of_date");
      expect(stale.changed).toContain("frames");
      const history = await RunHistory.findOne({ where: { runId: run.id, field: "frames" } });
      expect([history?.oldValue, history?.newValue]).toEqual(["5 frames", "4 frames (removed frame 3 (frame_3.png))"]);
      // The view setup and the old tracks stay: only the stack changed.
      expect(await ViewSetup.count({ where: { runId: run.id } })).toBe(1);
      expect(await Track.count({ where: { runId: run.id } })).toBe(1);
    } finally {
      release();
    }
    await whenRechecksIdle();
    // Tracking was queued again, on the four frames now in the stack.
    const again = await TrackingJob.findOne({ where: { runId: run.id, id: { [Op.gt]: job.id } } });
    expect(again?.framesTotal).toBe(4);
    await whenTrackingIdle();
  });

  it("takes out a range, or the whole stack, which puts the run back to draft and keeps its view setup", async () => {
    const { run, frames } = await checkedRunWithFrames(lab.manager);
    const release = holdRechecks();
    try {
      const range = await removeFrameSelection(run.id, lab.manager, { from: 1, to: 3 });
      expect(range.removed.map((r) => r.name)).toEqual(["frame_2.png", "frame_3.png", "frame_4.png"]);
      expect(await stackOf(run.id)).toEqual([
        [0, "frame_1.png"],
        [1, "frame_5.png"],
      ]);
      // Two frames cannot be tracked: nothing is queued, the check simply stays out of date.
      expect(range.retracking).toBe(false);
      expect((await RunHistory.findOne({ where: { runId: run.id, field: "frames" } }))?.newValue).toBe("2 frames (removed frames 2–4)");

      const all = await removeFrameSelection(run.id, lab.manager, { all: true }, { frameCount: 2 });
      expect([all.frameCount, all.removed.length, all.retracking]).toEqual([0, 2, false]);
      expect(await Frame.count({ where: { runId: run.id } })).toBe(0);
      const names = new Set((await store().list(runPrefix(run.id))).map((o) => o.key));
      for (const f of frames) {
        expect(names.has(runKey(run.id, f.storedName))).toBe(false);
        expect(names.has(runKey(run.id, f.thumbName!))).toBe(false);
      }
      const fresh = (await Run.findByPk(run.id))!;
      expect([fresh.state, fresh.frameCount, fresh.frameWidthPx, fresh.frameHeightPx]).toEqual(["draft", 0, null, null]);
      expect(await ViewSetup.count({ where: { runId: run.id } })).toBe(1);
      await expect(removeFrameSelection(run.id, lab.manager, { all: true })).rejects.toMatchObject({ status: 409, code: "no_frames" });
    } finally {
      release();
    }
  });

  it("refuses a signed-off run with 409 and removes nothing", async () => {
    const { run, frames } = await checkedRunWithFrames(lab.technician);
    await signOffRun(run.id, lab.manager);
    for (const who of [lab.technician, lab.manager]) {
      await expect(removeFrameSelection(run.id, who, { from: 0, to: 0 })).rejects.toMatchObject({
        status: 409,
        code: "run_signed_off",
        message: expect.stringContaining("signed off and read-only"),
      });
    }
    expect((await stackOf(run.id)).length).toBe(5);
    for (const f of frames) expect(await inStore(run.id, f.storedName)).toBe(true);
  });

  it("refuses another technician and an instructor with 403; only the run's technician or a lab manager may", async () => {
    const { run } = await checkedRunWithFrames(lab.technician);
    for (const who of [lab.technician2, lab.instructor]) {
      await expect(removeFrameSelection(run.id, who, { from: 0, to: 0 })).rejects.toMatchObject({ status: 403, code: "forbidden" });
    }
    expect((await stackOf(run.id)).length).toBe(5);
  });

  it("refuses a range off the stack, a stack that changed since it was seen, and frames being tracked", async () => {
    const { run } = await checkedRunWithFrames(lab.technician);
    await expect(removeFrameSelection(run.id, lab.technician, { from: 3, to: 5 })).rejects.toMatchObject({ status: 400, code: "out_of_range" });
    await expect(removeFrameSelection(run.id, lab.technician, { from: 0, to: 0 }, { frameCount: 4 })).rejects.toMatchObject({
      status: 409,
      code: "stack_changed",
    });
    const busy = await TrackingJob.create({ runId: run.id, requestedById: lab.technician.id, state: "queued", error: null, startedAt: null, finishedAt: null });
    try {
      await expect(removeFrameSelection(run.id, lab.technician, { from: 0, to: 0 })).rejects.toMatchObject({ status: 409, code: "job_active" });
    } finally {
      await busy.update({ state: "cancelled" });
    }
    expect((await stackOf(run.id)).length).toBe(5);
    await expect(removeFrameSelection(999_999, lab.technician, { all: true })).rejects.toMatchObject({ status: 404 });
  });
});
