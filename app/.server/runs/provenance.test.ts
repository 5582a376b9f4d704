import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Run, RunHistory, Track, TrackingJob, ViewSetup } from "../db";
import { smallLab } from "../test-support";
import { createRun, updateRun } from "./service";
import { checkRun } from "./theory";
import { checkInputs, trackingFingerprint } from "./provenance";
import { currentCheck } from "./current-check";
import { getRunDetail, signOffRun } from "./record";
import { holdRechecks, whenRechecksIdle } from "./rechecks";
import { saveViewSetup } from "./view-setup";
import { stopTrackingQueue } from "../jobs/tracking-queue";
import { rpmToRadPerS } from "~/lib/analysis/units";

let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  lab = await smallLab();
});
afterAll(async () => {
  await stopTrackingQueue();
});

const centre = { x: 320, y: 240 };
const pxPerM = 800;
const setupValues = (runId: number, cameraId: number, over: Record<string, unknown> = {}) => ({
  runId,
  cameraId,
  centreXPx: centre.x,
  centreYPx: centre.y,
  tankEdgeXPx: null,
  tankEdgeYPx: null,
  tankEdgeRPx: null,
  scalePxPerM: pxPerM,
  scalePoints: null,
  mirrored: false,
  createdById: lab.tech.id,
  ...over,
});

/** A run at 8 rpm set with a float on the inertial circle of a table truly at `trueRpm`, tracked and checked. */
async function checkedRun(trueRpm: number) {
  const run = await createRun(lab.runInput({ setRateRpm: 8 }), lab.tech);
  await ViewSetup.create(setupValues(run.id, run.cameraId));
  const job = await TrackingJob.create({
    runId: run.id,
    requestedById: lab.tech.id,
    state: "done",
    framesTotal: 180,
    framesDone: 180,
    error: null,
    startedAt: new Date(),
    finishedAt: new Date(),
    inputFingerprint: await trackingFingerprint(run),
  });
  const f = 2 * rpmToRadPerS(trueRpm);
  const points = Array.from({ length: 180 }, (_, i) => {
    const t = i / 30;
    return [t, centre.x + (0.02 + 0.07 * Math.cos(-f * t)) * pxPerM, centre.y - 0.07 * Math.sin(-f * t) * pxPerM, i];
  });
  await Track.create({ runId: run.id, jobId: job.id, number: 1, points: JSON.stringify(points), pointCount: points.length, detectedShare: 1, jitterPx: 0 });
  await run.update({ state: "tracked" });
  await checkRun(run.id, lab.tech.id);
  return (await Run.findByPk(run.id))!;
}

const form = (run: Run, over: Record<string, unknown> = {}) =>
  lab.runInput({ setRateRpm: run.setRateRpm, cameraMode: run.cameraMode, frameRateFps: run.frameRateFps, tracer: run.tracer, ...over });

describe("a theory check is current only while its inputs are", () => {
  it("set rate 8 → 9 rpm: out of date at once, no stale verdict, sign-off 409; re-checked automatically and current again", async () => {
    const run = await checkedRun(9);
    const before = await currentCheck(run.id);
    expect(before.status).toBe("current");
    // The float circles at the 9 rpm inertial frequency, so against 8 rpm set the check disagrees.
    expect(before.check!.verdict).toBe("disagrees");

    const release = holdRechecks();
    await updateRun(run.id, form(run, { setRateRpm: 9 }), lab.tech);
    const stale = await currentCheck(run.id);
    expect(stale.status).toBe("out_of_date");
    expect(stale.latest!.id).toBe(before.check!.id);
    const detail = (await getRunDetail(run.id))!;
    expect(detail.checkStatus).toBe("out_of_date");
    expect(detail.checkOutOfDate).toMatchObject({ because: ["set rate"] });
    expect(detail.latestTheoryCheck).toBeNull();
    expect(detail.verdict).toBeNull();
    expect((await Run.findByPk(run.id))!.verdict).toBeNull();
    await expect(signOffRun(run.id, lab.manager)).rejects.toMatchObject({ status: 409, code: "check_out_of_date" });

    release();
    await whenRechecksIdle();
    const after = await currentCheck(run.id);
    expect(after.status).toBe("current");
    expect(after.check!.id).toBeGreaterThan(before.check!.id);
    expect(after.check!.verdict).toBe("agrees");
    expect((await Run.findByPk(run.id))!.verdict).toBe("agrees");
    const rows = await RunHistory.findAll({ where: { runId: run.id, field: "theoryCheck" }, order: [["id", "ASC"]] });
    expect(rows.map((r) => [r.oldValue, r.newValue])).toEqual([
      [null, `#${before.check!.id} disagrees`],
      [`#${before.check!.id} disagrees`, `#${after.check!.id} agrees (re-checked after a change of set rate)`],
    ]);
    await signOffRun(run.id, lab.manager);
    expect((await Run.findByPk(run.id))!.state).toBe("signed_off");
    // Signed off: changes stay refused.
    await expect(updateRun(run.id, form(run, { setRateRpm: 10 }), lab.tech)).rejects.toMatchObject({ status: 409, code: "run_signed_off" });
  });

  it("a moved rotation centre makes the check out of date and sign-off waits for the re-track", async () => {
    const run = await checkedRun(8);
    expect((await currentCheck(run.id)).status).toBe("current");
    const release = holdRechecks();
    await saveViewSetup(run, setupValues(run.id, run.cameraId, { centreXPx: centre.x + 4 }), lab.tech.id);
    expect((await currentCheck(run.id)).status).toBe("out_of_date");
    // A fit of the old tracks against the new setup does not make it current: the tracks were made with the old marks.
    await checkRun(run.id, lab.tech.id);
    expect((await currentCheck(run.id)).status).toBe("out_of_date");
    expect((await getRunDetail(run.id))!.latestTheoryCheck).toBeNull();
    await expect(signOffRun(run.id, lab.manager)).rejects.toMatchObject({ status: 409, code: "check_out_of_date" });
    expect((await Run.findByPk(run.id))!.verdict).toBeNull();
    expect((await currentCheck(run.id)).changed).toEqual(["view setup"]);
    release();
    await whenRechecksIdle();
  });

  it("stores exactly what the check was computed from: conditions, frozen calibrations, tolerance, frames, view setup and every track", async () => {
    const run = await checkedRun(8);
    const { check } = await currentCheck(run.id);
    const stored = JSON.parse(check!.result).provenance;
    const track = await Track.findOne({ where: { runId: run.id } });
    expect(stored.inputs).toEqual(JSON.parse(JSON.stringify(await checkInputs(run, [track!]))));
    expect(stored.inputs).toMatchObject({
      conditions: { setRateRpm: 8, direction: "ccw", cameraMode: "rotating", tableId: run.tableId, flatTable: false },
      calibrations: JSON.parse(run.calibrationsInForce!),
      settings: { checkTolerancePct: 3 },
      tracking: { viewSetup: { centre: [centre.x, centre.y], scalePxPerM: pxPerM, mirrored: false }, tracer: "float", frameRateFps: 30, frames: { count: 0 } },
      tracks: [{ id: track!.id, number: 1, pointCount: 180, jobId: track!.jobId }],
    });
    expect(check!.inputFingerprint).toBe(stored.fingerprint);
  });

  it("a rate reached time in the future is refused with a message", async () => {
    const future = new Date(Date.now() + 3_600_000);
    await expect(createRun(lab.runInput({ rateReachedAt: future }), lab.tech)).rejects.toThrow(/in the future/);
    const run = await createRun(lab.runInput(), lab.tech);
    await expect(updateRun(run.id, lab.runInput({ rateReachedAt: future }), lab.tech)).rejects.toThrow(/in the future/);
  });
});
