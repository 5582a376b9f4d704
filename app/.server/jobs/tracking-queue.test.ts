import { afterAll, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { Detection, Run, TheoryCheck, Track, TrackingJob, isSqlite } from "../db";
import { smallLab } from "../test-support";
import { floatStackViewSetup } from "./testing";
import { createRun } from "../runs/service";
import { receiveFrameFile } from "../uploads/frames";
import { cancelTracking, enqueueTracking, JobError, resumeInterruptedJobs, stopTrackingQueue, whenTrackingIdle } from "./tracking-queue";
import { renderRunFrames } from "~/lib/tracking/synthetic";
import { floatStackSpec } from "~/lib/tracking/float-stack";

let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  lab = await smallLab();
});
afterAll(async () => {
  await stopTrackingQueue();
});

const spec = (frames: number, withTracer = true) => floatStackSpec(frames, { seed: 7, withTracer });

async function runWithFrames(frames: number, withTracer = true) {
  const run = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
  await renderRunFrames(spec(frames, withTracer), async (f) => {
    const jpeg = await sharp(Buffer.from(f.data), { raw: { width: f.width, height: f.height, channels: 3 } })
      .jpeg({ quality: 92 })
      .toBuffer();
    await receiveFrameFile(run, new File([new Uint8Array(jpeg)], `frame_${f.index}.jpg`), null);
  });
  await run.reload();
  return run;
}

async function setUp(run: Run) {
  await floatStackViewSetup(run, lab.tech.id);
}

describe("the tracking job queue", () => {
  it("refuses to start without frames, then without a view setup, with a reason in words", async () => {
    const empty = await createRun(lab.runInput(), lab.tech);
    await expect(enqueueTracking(empty, lab.tech.id)).rejects.toMatchObject({ code: "no_frames", message: expect.stringMatching(/no frames yet/) });
    const run = await runWithFrames(5);
    await expect(enqueueTracking(run, lab.tech.id)).rejects.toBeInstanceOf(JobError);
    await expect(enqueueTracking(run, lab.tech.id)).rejects.toMatchObject({ code: "no_view_setup" });
  });

  it("tracks a rendered stack, stores tracks and detections, and runs the theory check", async () => {
    const run = await runWithFrames(90);
    await setUp(run);
    const job = await enqueueTracking(run, lab.tech.id);
    await expect(enqueueTracking(run, lab.tech.id)).rejects.toMatchObject({ code: "job_active" });
    await whenTrackingIdle();
    await job.reload();
    expect(job.state).toBe("done");
    expect(job.framesDone).toBe(90);
    const tracks = await Track.findAll({ where: { runId: run.id } });
    expect(tracks.length).toBe(1);
    expect(tracks[0]!.pointCount).toBeGreaterThanOrEqual(89);
    expect(await Detection.count({ where: { jobId: job.id } })).toBeGreaterThanOrEqual(89);
    const check = await TheoryCheck.findOne({ where: { runId: run.id } });
    expect(check?.verdict).toBe("agrees");
    expect(check!.fMeasuredPerS! / check!.fPredictedPerS!).toBeCloseTo(1, 2);
    await run.reload();
    expect(run.state).toBe("checked");
    expect(run.verdict).toBe("agrees");
  });

  it("fails with the reason when the tracer is never found, and keeps the frames", async () => {
    const run = await runWithFrames(12, false);
    await setUp(run);
    const job = await enqueueTracking(run, lab.tech.id);
    await whenTrackingIdle();
    await job.reload();
    expect(job.state).toBe("failed");
    expect(job.error).toMatch(/not found/i);
    await run.reload();
    expect(run.frameCount).toBe(12);
  });

  it("resumes a job that was running when the server stopped, from the frames already searched", async () => {
    const run = await runWithFrames(60);
    await setUp(run);
    // A first full job gives the detections that an interrupted job would have stored for its first 20 frames.
    const first = await enqueueTracking(run, lab.tech.id);
    await whenTrackingIdle();
    const interrupted = await TrackingJob.create({
      runId: run.id,
      requestedById: lab.tech.id,
      state: "running",
      framesTotal: 60,
      framesDone: 20,
      resumeFromFrame: 20,
      error: null,
      startedAt: new Date(),
      finishedAt: null,
    });
    const early = await Detection.findAll({ where: { jobId: first.id } });
    await Detection.bulkCreate(
      early
        .filter((d) => d.frameIndex < 20)
        .map((d) => ({ jobId: interrupted.id, frameIndex: d.frameIndex, timeS: d.timeS, xPx: d.xPx, yPx: d.yPx, areaPx: d.areaPx, roundness: d.roundness })),
    );
    expect(await resumeInterruptedJobs()).toBe(1);
    await whenTrackingIdle();
    await interrupted.reload();
    expect(interrupted.state).toBe("done");
    expect(interrupted.attempts).toBe(1);
    const track = await Track.findOne({ where: { runId: run.id, jobId: interrupted.id } });
    expect(track?.pointCount).toBeGreaterThanOrEqual(59);
  });

  it("a stop mid-job (the server shutting down) leaves the job to resume at the next start, not cancelled", async () => {
    const run = await runWithFrames(120);
    await setUp(run);
    const job = await enqueueTracking(run, lab.tech.id);
    for (let i = 0; i < 2000 && job.state !== "running"; i++) {
      await new Promise((r) => setTimeout(r, 10));
      await job.reload();
    }
    expect(job.state).toBe("running");
    await stopTrackingQueue();
    await job.reload();
    // SQLite keeps it running for the next start to resume; PostgreSQL's worker hands it back to the shared queue.
    expect(job.state).toBe(isSqlite ? "running" : "queued");
    expect(job.error).toBeNull();
    expect(job.framesDone).toBeLessThan(120);
    await resumeInterruptedJobs();
    await whenTrackingIdle();
    await job.reload();
    expect(job.state).toBe("done");
    expect(job.attempts).toBe(2);
    expect(job.framesDone).toBe(120);
  });

  it("cancels a queued job", async () => {
    const run = await runWithFrames(5);
    await setUp(run);
    // Hold the queue busy with another run so this one stays queued.
    const busy = await runWithFrames(60);
    await setUp(busy);
    await enqueueTracking(busy, lab.tech.id);
    const job = await enqueueTracking(run, lab.tech.id);
    await cancelTracking(run.id);
    await job.reload();
    expect(job.state).toBe("cancelled");
    await whenTrackingIdle();
    await job.reload();
    expect(job.state).toBe("cancelled");
  });
});
