import { beforeAll, describe, expect, it } from "vitest";
import { migrate, Run, TrackingJob } from "../db";
import { createRun } from "./service";
import { checkRun } from "./theory";
import { checkAwaited } from "./current-check";
import { checkedRunFor, doneTrackingJob, plainViewSetup, runInput, seedRunLab, type RunLab } from "./testing";

let lab: RunLab;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
});

/** A run with a view setup and a tracking job that has just finished, its check not made yet. */
async function trackedUnchecked() {
  const run = await createRun(runInput(lab), lab.technician);
  await plainViewSetup(run, lab.technician.id);
  const job = await doneTrackingJob(run, lab.technician.id, 10);
  await run.update({ state: "tracked" });
  return { run, job };
}

describe("checkAwaited: the run page keeps polling after tracking until the verdict is made", () => {
  it("is true for a job that has just finished while no check is newer than it", async () => {
    const { run, job } = await trackedUnchecked();
    expect(await checkAwaited(run, job)).toBe(true);
  });

  it("is false once the check that follows the job is made", async () => {
    const { run } = await checkedRunFor(lab, lab.technician);
    const job = await TrackingJob.findOne({ where: { runId: run.id }, order: [["id", "DESC"]] });
    expect(job?.state).toBe("done");
    expect(await checkAwaited(run, job)).toBe(false);
  });

  it("stops being awaited two minutes after the job ended (a check that failed is not awaited for ever)", async () => {
    const { run, job } = await trackedUnchecked();
    const later = new Date(job.finishedAt!.getTime() + 121_000);
    expect(await checkAwaited(run, job, later)).toBe(false);
    expect(await checkAwaited(run, job, new Date(job.finishedAt!.getTime() + 60_000))).toBe(true);
  });

  it("is true when the run was read before the job's last write and the job after it, as a page loading at that moment does", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    await plainViewSetup(run, lab.technician.id);
    await run.update({ state: "frames_in" });
    const readBefore = await Run.findByPk(run.id);
    const job = await doneTrackingJob(run, lab.technician.id, 10);
    await run.update({ state: "tracked" });
    expect(readBefore?.state).toBe("frames_in");
    expect(await checkAwaited(readBefore!, job)).toBe(true);
  });

  it("is true for a page whose own read of the check came before the check was made, though the check is made now", async () => {
    const { run } = await checkedRunFor(lab, lab.technician);
    const done = await TrackingJob.findOne({ where: { runId: run.id }, order: [["id", "DESC"]] });
    expect(done?.state).toBe("done");
    expect((await Run.findByPk(run.id))?.state).toBe("checked");
    // The page read no check (its read came first); reading afresh, the poll sees the check and stops.
    expect(await checkAwaited(run, done, new Date(done!.finishedAt!.getTime() + 1000), null)).toBe(true);
    expect(await checkAwaited(run, done, new Date(done!.finishedAt!.getTime() + 1000))).toBe(false);
  });

  it("is false while the job still runs, and with no job", async () => {
    const { run, job } = await trackedUnchecked();
    await job.update({ state: "running", finishedAt: null });
    expect(await checkAwaited(run, job)).toBe(false);
    expect(await checkAwaited(run, null)).toBe(false);
  });

  it("stays awaited while the check could not be made (no tracks yet), until the two minutes pass", async () => {
    const { run, job } = await trackedUnchecked();
    // No tracks: the check cannot be made, so the run stays awaited until the window passes.
    expect(await checkRun(run.id, lab.technician.id).catch(() => null)).toBeNull();
    expect(await checkAwaited(run, job)).toBe(true);
  });
});
