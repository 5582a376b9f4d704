import { Op } from "sequelize";
import { Detection, Frame, Run, Track, TrackingJob, ViewSetup, sequelize } from "../db";
import { onBoot } from "../boot";
import { mapLimit, MissingObjectError, runKey, ScratchDir, store } from "../storage";
import { trackFrameStack, closeTrackingPool } from "../tracking/track-frame-stack";
import { isTrackingCancelled } from "../tracking/errors";
import { setRunState } from "../runs/service";
import { checkRun } from "../runs/theory";
import { trackingFingerprint } from "../runs/provenance";
import type { FrameDetections, TrackingSetup } from "~/lib/tracking/types";

/**
 * The tracking job queue. Jobs live in the database; this process runs one at a time (the worker
 * pool already uses every core for its frames) and is the only writer, as SQLite wants.
 */
export class JobError extends Error {
  constructor(
    message: string,
    readonly status = 409,
    readonly code = "tracking_not_possible",
  ) {
    super(message);
  }
}

const running = new Map<number, AbortController>();
let pumping: Promise<void> | null = null;
let stopped = false;

export function serializeJob(job: TrackingJob | null) {
  if (!job) return null;
  return {
    id: job.id,
    state: job.state,
    framesDone: job.framesDone,
    framesTotal: job.framesTotal,
    percent: job.framesTotal ? Math.round((1000 * job.framesDone) / job.framesTotal) / 10 : 0,
    error: job.error,
    startedAt: job.startedAt?.toISOString() ?? null,
    finishedAt: job.finishedAt?.toISOString() ?? null,
    createdAt: job.createdAt.toISOString(),
  };
}

export function latestJob(runId: number) {
  return TrackingJob.findOne({ where: { runId }, order: [["id", "DESC"]] });
}

export async function enqueueTracking(run: Run, userId: number) {
  if (run.state === "signed_off") throw new JobError("This run is signed off; its tracks cannot change.", 409, "run_signed_off");
  const frames = await Frame.count({ where: { runId: run.id } });
  if (frames === 0) throw new JobError("This run has no frames yet: bring the frame stack first.", 409, "no_frames");
  if (frames < 3) throw new JobError("Tracking needs at least 3 frames.", 409, "too_few_frames");
  const setup = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!setup) throw new JobError("Set up the view first: mark the rotation centre, the tank edge and the scale.", 409, "no_view_setup");
  const active = await TrackingJob.findOne({ where: { runId: run.id, state: { [Op.in]: ["queued", "running"] } } });
  if (active) throw new JobError("A tracking job for this run is already queued or running.", 409, "job_active");
  const job = await TrackingJob.create({ runId: run.id, requestedById: userId, framesTotal: frames, error: null, startedAt: null, finishedAt: null });
  kick();
  return job;
}

export async function cancelTracking(runId: number) {
  const job = await TrackingJob.findOne({ where: { runId, state: { [Op.in]: ["queued", "running"] } }, order: [["id", "DESC"]] });
  if (!job) throw new JobError("There is no queued or running tracking job to cancel.", 409, "no_active_job");
  if (job.state === "queued") {
    await job.update({ state: "cancelled", finishedAt: new Date(), error: "Cancelled before it started." });
  } else {
    running.get(job.id)?.abort();
    // The runner marks it cancelled when the pool stops; say so now so the page does not wait.
    await job.update({ state: "cancelled", finishedAt: new Date(), error: "Cancelled by a technician." });
  }
  return job;
}

function kick() {
  if (stopped || pumping) return;
  pumping = (async () => {
    try {
      for (;;) {
        if (stopped) break;
        const job = await TrackingJob.findOne({ where: { state: "queued" }, order: [["id", "ASC"]] });
        if (!job) break;
        await runJob(job);
      }
    } finally {
      pumping = null;
    }
  })().catch((err) => console.error("[tracking] queue stopped:", err));
}

/**
 * The frames as files the tracking pool can read: on disk, the stored files themselves; from a
 * bucket, copies downloaded into the job's scratch folder (removed when the job ends).
 */
async function frameStackOf(run: Run, scratch: ScratchDir) {
  const frames = await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] });
  const allTimed = frames.every((f) => f.timeS !== null && Number.isFinite(f.timeS));
  const files = await mapLimit(frames, 4, async (f, i) => {
    try {
      return await store().localPath(runKey(run.id, f.storedName), scratch);
    } catch (err) {
      if (err instanceof MissingObjectError) throw new JobError(`The file of frame ${i + 1} (${f.originalName}) is missing from storage. Bring the same frames again to put it back, then track again.`, 409, "frame_file_missing");
      throw err;
    }
  });
  return {
    files,
    // Frames cut from a video keep their own times; a numbered stack is spaced by the frame rate.
    times: frames.map((f, i) => (allTimed ? (f.timeS as number) : i / run.frameRateFps)),
  };
}

async function trackingSetupOf(run: Run): Promise<TrackingSetup> {
  const setup = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!setup) throw new JobError("The view setup was removed.");
  return {
    tracer: run.tracer,
    centre: { x: setup.centreXPx, y: setup.centreYPx },
    tankEdge: setup.tankEdgeRPx && setup.tankEdgeXPx !== null && setup.tankEdgeYPx !== null ? { cx: setup.tankEdgeXPx, cy: setup.tankEdgeYPx, r: setup.tankEdgeRPx } : null,
    mirrored: setup.mirrored,
  };
}

async function priorDetections(job: TrackingJob): Promise<FrameDetections[]> {
  const upTo = job.resumeFromFrame;
  if (upTo <= 0) return [];
  await Detection.destroy({ where: { jobId: job.id, frameIndex: { [Op.gte]: upTo } } });
  const rows = await Detection.findAll({ where: { jobId: job.id }, order: [["frameIndex", "ASC"]] });
  const frames: FrameDetections[] = [];
  for (let i = 0; i < upTo; i++) frames.push({ frameIndex: i, t: Number.NaN, detections: [] });
  for (const r of rows) {
    const f = frames[r.frameIndex];
    if (!f) continue;
    f.t = r.timeS;
    f.detections.push({ x: r.xPx, y: r.yPx, area: r.areaPx ?? 0, roundness: r.roundness ?? 1, intensity: 0 });
  }
  return frames;
}

async function runJob(job: TrackingJob) {
  const controller = new AbortController();
  running.set(job.id, controller);
  const scratch = new ScratchDir(`tracking-job-${job.id}`);
  const run = await Run.findByPk(job.runId);
  try {
    if (!run) throw new JobError("The run was deleted.");
    const stack = await frameStackOf(run, scratch);
    const setup = await trackingSetupOf(run);
    const prior = await priorDetections(job);
    for (const f of prior) if (!Number.isFinite(f.t)) f.t = stack.times[f.frameIndex];
    // What is tracked is recorded before tracking: a change meanwhile leaves these tracks out of date.
    const inputFingerprint = await trackingFingerprint(run);
    await job.update({ state: "running", startedAt: job.startedAt ?? new Date(), attempts: job.attempts + 1, framesTotal: stack.files.length, error: null, inputFingerprint });

    const done = new Set<number>(prior.map((p) => p.frameIndex));
    let watermark = prior.length;
    let pending: FrameDetections[] = [];
    let framesDone = prior.length;
    let lastFlush = Date.now();
    let flushing: Promise<unknown> = Promise.resolve();
    const flush = () => {
      const batch = pending;
      pending = [];
      const mark = watermark;
      const count = framesDone;
      flushing = flushing.then(async () => {
        const rows = batch.flatMap((f) =>
          f.detections.map((d) => ({ jobId: job.id, frameIndex: f.frameIndex, timeS: f.t, xPx: d.x, yPx: d.y, areaPx: d.area, roundness: d.roundness })),
        );
        if (rows.length) await Detection.bulkCreate(rows);
        await TrackingJob.update({ framesDone: count, resumeFromFrame: mark }, { where: { id: job.id, state: "running" } });
      });
      return flushing;
    };

    const result = await trackFrameStack({
      files: stack.files,
      times: stack.times,
      setup,
      signal: controller.signal,
      startAt: prior.length,
      priorDetections: prior,
      onFrameDetections: (fd) => {
        pending.push(fd);
        done.add(fd.frameIndex);
        framesDone++;
        while (done.has(watermark)) watermark++;
        if (Date.now() - lastFlush > 500) {
          lastFlush = Date.now();
          void flush();
        }
      },
    });
    await flush();
    await flushing;

    const quality = new Map(result.quality.tracks.map((q) => [q.id, q]));
    await sequelize.transaction(async (transaction) => {
      await Track.destroy({ where: { runId: run.id }, transaction });
      await Track.bulkCreate(
        result.tracks.map((t, i) => ({
          runId: run.id,
          jobId: job.id,
          number: i + 1,
          points: JSON.stringify(t.points.map((p) => [p.t, round(p.x), round(p.y), p.frameIndex])),
          pointCount: t.points.length,
          detectedShare: quality.get(t.id)?.detectedShare ?? null,
          jitterPx: quality.get(t.id)?.jitterPx ?? null,
        })),
        { transaction },
      );
      await job.update(
        { state: "done", framesDone: result.frames, resumeFromFrame: result.frames, finishedAt: new Date(), error: result.tracks.length ? null : "No track was long enough to keep." },
        { transaction },
      );
      await run.reload({ transaction });
      if (run.state !== "signed_off") await setRunState(run, "tracked", job.requestedById, transaction);
      await run.update({ verdict: null }, { transaction });
    });
    // Frames or the view setup changed while tracking: these tracks are already out of date, so track again.
    if ((await trackingFingerprint(await run.reload())) !== inputFingerprint) {
      const { scheduleRecheck } = await import("../runs/rechecks");
      scheduleRecheck(run.id, job.requestedById, "track");
      return;
    }
    await checkRun(run.id, job.requestedById).catch((err) => console.error(`[tracking] theory check of run ${run.id} failed:`, err));
  } catch (err) {
    await job.reload();
    if (job.state === "cancelled" || isTrackingCancelled(err) || controller.signal.aborted) {
      if (job.state !== "cancelled") await job.update({ state: "cancelled", finishedAt: new Date(), error: "Cancelled." });
    } else if (stopped) {
      // The server is stopping: leave the job running in the database so the next start resumes it.
    } else {
      const reason = err instanceof Error ? err.message : String(err);
      console.error(`[tracking] job ${job.id} failed: ${reason}`);
      await job.update({ state: "failed", finishedAt: new Date(), error: reason });
    }
  } finally {
    running.delete(job.id);
    await scratch.dispose().catch((err) => console.error(`[tracking] scratch folder of job ${job.id} not removed:`, err));
  }
}

const round = (v: number) => Math.round(v * 1000) / 1000;

/** At start: jobs that were running when the server stopped go back in the queue and resume. */
export async function resumeInterruptedJobs() {
  const [count] = await TrackingJob.update({ state: "queued" }, { where: { state: "running" } });
  if (count) console.log(`[tracking] resuming ${count} interrupted job(s)`);
  stopped = false;
  kick();
  return count;
}

export async function stopTrackingQueue() {
  stopped = true;
  for (const c of running.values()) c.abort();
  await pumping?.catch(() => undefined);
  await closeTrackingPool();
}

/** Resolves when the queue has nothing left to do (tests and the demo seeding wait on it). */
export async function whenTrackingIdle() {
  while (pumping) await pumping;
}

onBoot({ name: "tracking-queue", start: async () => void (await resumeInterruptedJobs()), stop: stopTrackingQueue });
