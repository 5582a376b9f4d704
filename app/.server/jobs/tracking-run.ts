import { Op, type WhereOptions } from "sequelize";
import { Detection, Frame, Run, Track, TrackingJob, ViewSetup, sequelize } from "../db";
import { frameKey, mapLimit, MissingObjectError, ScratchDir, store } from "../storage";
import { trackFrameStack } from "../tracking/track-frame-stack";
import { isTrackingCancelled, TrackingError } from "../tracking/errors";
import { setRunState } from "../runs/service";
import { checkRun } from "../runs/theory";
import { trackingFingerprint } from "../runs/provenance";
import { measureRateFromFrames } from "../tracking/rate-pass";
import { settleFrameStream } from "./frame-stream";
import { rateSettingsFrom, trackingSetupFrom } from "./tracking-setup";
import { streamedRateFits, type StreamedRate } from "./rate-stream";
import { pruneStreamed, stackBasis, streamedFrames } from "./streamed-detections";
import type { FrameDetections, TrackingSetup } from "~/lib/tracking/types";

/**
 * One tracking job from its stored state to its tracks: read the frames through storage, resume
 * after the detections already stored, store detections and progress as frames finish, write the
 * tracks and run the theory check. The in-process queue (SQLite) and the shared queue's workers
 * (PostgreSQL) both run jobs through here; they differ only in how the job is held (`JobHold`).
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

/** The job is no longer this runner's: cancelled, or taken over by another worker after a lost lease. */
class JobLost extends Error {}

export interface JobHold {
  /** Conditions on every write of the job's progress and outcome, beside its id and state "running". */
  where: WhereOptions<TrackingJob>;
  /**
   * Each progress write is a transaction that updates the job row first and stores detections only
   * when that row is still held (`where`), and the outcome is written the same way: a runner that
   * lost the job (its lease ran out and another worker took it) stops without writing anything.
   */
  fenced: boolean;
  /** Extra values written with each progress write (a lease renewal). */
  progress?: () => Record<string, unknown>;
  /** Extra values written with the outcome (the lease let go). */
  release?: Record<string, unknown>;
  /** This process is stopping: the job is left for the next start (or handed back), not cancelled. */
  stopping: () => boolean;
  /** Called when the process stops mid-job, to hand the job back. */
  handBack?: (job: TrackingJob) => Promise<void>;
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
      return await store().localPath(frameKey(f), scratch);
    } catch (err) {
      if (err instanceof MissingObjectError)
        throw new JobError(
          `The file of frame ${i + 1} (${f.originalName}) is missing from storage. Bring the same frames again to put it back, then track again.`,
          409,
          "frame_file_missing",
        );
      throw err;
    }
  });
  return {
    files,
    shas: frames.map((f) => f.sha256),
    // Frames cut from a video keep their own times; a numbered stack is spaced by the frame rate.
    times: frames.map((f, i) => (allTimed ? (f.timeS as number) : i / run.frameRateFps)),
  };
}

async function trackingSetupOf(run: Run): Promise<TrackingSetup> {
  const setup = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!setup) throw new JobError("The view setup was removed.");
  return trackingSetupFrom(run, setup);
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

/**
 * What was done as the frames arrived (frame-stream.ts), once this process's stream of the run has
 * settled: the detections of the stack's frames from `from` on that were searched on the very
 * basis this stack gives, and the rate as read then (checked against the stack before use).
 */
async function streamedOf(
  run: Run,
  stack: { shas: string[]; times: number[] },
  setup: TrackingSetup,
  from: number,
): Promise<{ frames: FrameDetections[]; rate: StreamedRate | null; basis: string | null }> {
  const { rate, found } = await settleFrameStream(run.id);
  if (!run.frameWidthPx || !run.frameHeightPx) return { frames: [], rate, basis: null };
  let basis: string | null;
  try {
    basis = stackBasis(setup, { width: run.frameWidthPx, height: run.frameHeightPx }, stack.shas);
  } catch {
    // A setup the plan refuses: the search says why, in its own words.
    return { frames: [], rate, basis: null };
  }
  if (!basis) return { frames: [], rate, basis };
  // This process's stream hands over what it found when it searched on this very basis; the table holds the rest (another process, an earlier stream).
  const known = found?.basis === basis ? found.bySha : undefined;
  const frames = (await streamedFrames(run.id, basis, stack.shas, stack.times, known)).filter((f) => f.frameIndex >= from);
  if (frames.length) console.log(`[tracking] run ${run.id}: ${frames.length} of ${stack.shas.length} frames were searched as they arrived`);
  return { frames, rate, basis };
}

/** Seconds spent in each step of a job, for its last log line. */
class PhaseClock {
  private last = performance.now();
  private readonly steps: string[] = [];
  mark(step: string) {
    const now = performance.now();
    this.steps.push(`${step} ${((now - this.last) / 1000).toFixed(2)} s`);
    this.last = now;
  }
  summary() {
    return this.steps.join(", ");
  }
}

const round = (v: number) => Math.round(v * 1000) / 1000;

export async function runTrackingJob(job: TrackingJob, hold: JobHold, controller: AbortController) {
  const scratch = new ScratchDir(`tracking-job-${job.id}`);
  try {
    await trackHeldJob(job, hold, controller, scratch);
  } finally {
    await scratch.dispose().catch((err) => console.error(`[tracking] scratch folder of job ${job.id} not removed:`, err));
  }
}

async function trackHeldJob(job: TrackingJob, hold: JobHold, controller: AbortController, scratch: ScratchDir) {
  const mine = { id: job.id, state: "running", ...hold.where } as WhereOptions<TrackingJob>;
  const run = await Run.findByPk(job.runId);
  // The job's outcome, written only while the job is still held (on PostgreSQL) or as it is (SQLite).
  const record = async (values: Partial<TrackingJob>) => {
    if (hold.fenced) await TrackingJob.update({ ...values, ...hold.release }, { where: mine });
    else await job.update(values);
  };
  let flushError: unknown = null;
  try {
    if (!run) throw new JobError("The run was deleted.");
    const stack = await frameStackOf(run, scratch);
    const setup = await trackingSetupOf(run);
    const prior = await priorDetections(job);
    for (const f of prior) if (!Number.isFinite(f.t)) f.t = stack.times[f.frameIndex]!;
    if (prior.length) console.log(`[tracking] job ${job.id} (run ${run.id}) resumes at frame ${prior.length + 1} of ${stack.files.length}`);
    // Frames searched as they arrived, on the very basis this stack gives: not searched again.
    const phases = new PhaseClock();
    const streamed = await streamedOf(run, stack, setup, prior.length);
    phases.mark("stream settled");
    // What is tracked is recorded before tracking: a change meanwhile leaves these tracks out of date.
    const inputFingerprint = await trackingFingerprint(run);
    const starting = {
      state: "running" as const,
      startedAt: job.startedAt ?? new Date(),
      attempts: job.attempts + 1,
      framesTotal: stack.files.length,
      error: null,
      inputFingerprint,
    };
    if (hold.fenced) {
      const [held] = await TrackingJob.update(starting, { where: mine });
      if (!held) throw new JobLost();
    } else {
      await job.update(starting);
    }

    const done = new Set<number>(prior.map((p) => p.frameIndex));
    let watermark = prior.length;
    let pending: FrameDetections[] = [];
    let framesDone = prior.length + streamed.frames.length;
    let lastFlush = Date.now();
    // The first few frames are stored at once, then every half second: whoever watches the job (the
    // run page, a worker taking it over) sees it move from its first frames, however fast it runs.
    const FIRST_FLUSH_FRAMES = 4;
    let flushedOnce = false;
    let flushing: Promise<unknown> = Promise.resolve();
    const write = async (batch: FrameDetections[], count: number, mark: number) => {
      const rows = batch.flatMap((f) =>
        f.detections.map((d) => ({ jobId: job.id, frameIndex: f.frameIndex, timeS: f.t, xPx: d.x, yPx: d.y, areaPx: d.area, roundness: d.roundness })),
      );
      if (!hold.fenced) {
        if (rows.length) await Detection.bulkCreate(rows);
        await TrackingJob.update({ framesDone: count, resumeFromFrame: mark }, { where: { id: job.id, state: "running" } });
        return;
      }
      const held = await sequelize.transaction(async (transaction) => {
        const [n] = await TrackingJob.update({ framesDone: count, resumeFromFrame: mark, ...hold.progress?.() }, { where: mine, transaction });
        if (n && rows.length) await Detection.bulkCreate(rows, { transaction });
        return n === 1;
      });
      if (!held) throw new JobLost();
    };
    const flush = () => {
      const batch = pending;
      pending = [];
      const mark = watermark;
      const count = framesDone;
      flushing = flushing
        .then(() => (flushError ? undefined : write(batch, count, mark)))
        .catch((err) => {
          // Kept, and the tracking stopped: the job ends below with this error, never half-written.
          flushError ??= err;
          controller.abort();
        });
      return flushing;
    };

    const result = await trackFrameStack({
      files: stack.files,
      times: stack.times,
      setup,
      signal: controller.signal,
      startAt: prior.length,
      priorDetections: [...prior, ...streamed.frames],
      onFrameDetections: (fd) => {
        pending.push(fd);
        done.add(fd.frameIndex);
        framesDone++;
        while (done.has(watermark)) watermark++;
        if (Date.now() - lastFlush > 500 || (!flushedOnce && pending.length >= FIRST_FLUSH_FRAMES)) {
          flushedOnce = true;
          lastFlush = Date.now();
          void flush();
        }
      },
    }).catch(async (err) => {
      await flushing;
      throw flushError ?? err;
    });
    await flush();
    if (flushError) throw flushError;

    // The table's rate read from the same frames: a light pass of its own, after the tracer's.
    phases.mark("search and linking");
    const viewSetup = await ViewSetup.findOne({ where: { runId: run.id } });
    if (!viewSetup) throw new JobError("The view setup was removed.");
    const rateSettings = rateSettingsFrom(run, viewSetup);
    // Read while the frames arrived, from exactly the frames and settings this pass would use: taken as it is.
    const rateFromStream = streamed.rate && streamedRateFits(streamed.rate, rateSettings, stack.shas, stack.times) ? streamed.rate : null;
    if (streamed.rate)
      console.log(
        `[tracking] run ${run.id}: the rate read as the frames arrived ${rateFromStream ? "is used" : "is not this stack's; the frames are read again"}`,
      );
    const measuredRate = rateFromStream
      ? rateFromStream.columns
      : await measureRateFromFrames({ ...rateSettings, files: stack.files, times: stack.times, signal: controller.signal });
    if (controller.signal.aborted) throw flushError ?? new TrackingError("cancelled", "The tracking job was cancelled.");

    phases.mark("rate");
    const quality = new Map(result.quality.tracks.map((q) => [q.id, q]));
    const finished = {
      ...measuredRate,
      state: "done" as const,
      framesDone: result.frames,
      resumeFromFrame: result.frames,
      finishedAt: new Date(),
      error: result.tracks.length ? null : "No track was long enough to keep.",
    };
    await sequelize.transaction(async (transaction) => {
      if (hold.fenced) {
        // The job row first: its lock orders this against a worker taking the job over.
        const [held] = await TrackingJob.update({ ...finished, ...hold.release }, { where: mine, transaction });
        if (!held) throw new JobLost();
      }
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
      if (!hold.fenced) await job.update(finished, { transaction });
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
    phases.mark("tracks stored");
    await checkRun(run.id, job.requestedById).catch((err) => console.error(`[tracking] theory check of run ${run.id} failed:`, err));
    phases.mark("check");
    // After the verdict, so it never waits on this.
    await pruneStreamed(run.id, streamed.basis, stack.shas).catch((err) =>
      console.error(`[tracking] run ${run.id}: stale streamed detections not removed:`, err),
    );
    console.log(`[tracking] job ${job.id} (run ${run.id}) done: ${phases.summary()}`);
  } catch (err) {
    await job.reload();
    if (job.state === "cancelled") return;
    if (err instanceof JobLost || (hold.fenced && (job.state !== "running" || (await TrackingJob.count({ where: mine })) === 0))) {
      console.warn(`[tracking] job ${job.id} is no longer this worker's (its lease ran out and another took it over); this worker stops it`);
      return;
    }
    if (hold.stopping()) {
      // The process is stopping: the job stays running in the database and resumes from its stored detections.
      await hold.handBack?.(job);
      return;
    }
    if (!flushError && (isTrackingCancelled(err) || controller.signal.aborted)) {
      await record({ state: "cancelled", finishedAt: new Date(), error: "Cancelled." });
      return;
    }
    const reason = err instanceof Error ? err.message : String(err);
    console.error(`[tracking] job ${job.id} failed: ${reason}`);
    await record({ state: "failed", finishedAt: new Date(), error: reason });
  }
}
