import { Op } from "sequelize";
import { Frame, Run, TrackingJob, ViewSetup, sequelize } from "../db";
import { onBoot } from "../boot";
import { env } from "../env";
import { closeTrackingPool, readyTrackingInBackground } from "../tracking/tracking-pool";
import { stopFrameStreams } from "./frame-stream";
import { usesJobQueue } from "./boss";
import { JobError, runTrackingJob } from "./tracking-run";
import { ringTracking, sweepTrackingJobs } from "./tracking-leases";
import { abortLocalJob, localTrackingBusy, notifyWorker, startWorkers, stopWorkers } from "./job-workers";
import type { TrackingJobView } from "../openapi/responses/tracking";

/**
 * The tracking job queue. Jobs live in the database, where the pages read their state and progress.
 * On SQLite this process runs them one at a time (the worker pool already uses every core for its
 * frames) and is the only writer, as SQLite wants. On PostgreSQL each job also gets a doorbell in
 * the shared queue (pg-boss), and whichever worker process takes it runs the job (job-workers.ts).
 */
export { JobError };

const running = new Map<number, AbortController>();
let pumping: Promise<void> | null = null;
let stopped = false;

export function serializeJob(job: TrackingJob | null): TrackingJobView | null {
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

const alreadyActive = () => new JobError("A tracking job for this run is already queued or running.", 409, "job_active");

export async function enqueueTracking(run: Run, userId: number) {
  if (run.state === "signed_off") throw new JobError("This run is signed off; its tracks cannot change.", 409, "run_signed_off");
  const frames = await Frame.count({ where: { runId: run.id } });
  if (frames === 0) throw new JobError("This run has no frames yet: bring the frame stack first.", 409, "no_frames");
  if (frames < 3) throw new JobError("Tracking needs at least 3 frames.", 409, "too_few_frames");
  const setup = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!setup) throw new JobError("Set up the view first: mark the rotation centre, the tank edge and the scale.", 409, "no_view_setup");
  if (usesJobQueue) return enqueueShared(run, userId, frames);
  const active = await TrackingJob.findOne({ where: { runId: run.id, state: { [Op.in]: ["queued", "running"] } } });
  if (active) throw alreadyActive();
  const job = await TrackingJob.create({ runId: run.id, requestedById: userId, framesTotal: frames, error: null, startedAt: null, finishedAt: null });
  kick();
  return job;
}

/**
 * PostgreSQL: the run's row is locked while looking for an active job, so two web processes asked
 * at once make one job; the job and its doorbell commit together.
 */
async function enqueueShared(run: Run, userId: number, frames: number) {
  const job = await sequelize.transaction(async (transaction) => {
    await Run.findByPk(run.id, { attributes: ["id"], transaction, lock: transaction.LOCK.UPDATE });
    const active = await TrackingJob.findOne({ where: { runId: run.id, state: { [Op.in]: ["queued", "running"] } }, transaction });
    if (active) throw alreadyActive();
    const created = await TrackingJob.create(
      { runId: run.id, requestedById: userId, framesTotal: frames, error: null, startedAt: null, finishedAt: null },
      { transaction },
    );
    await ringTracking(created.id, transaction);
    return created;
  });
  await startLocalWorker();
  notifyWorker("tracking");
  return job;
}

/** A process that runs jobs (not TANKSIDE_WORKERS=0) takes them even before boot, as the SQLite queue does (seeding, tests). */
async function startLocalWorker() {
  if (!env.runsJobs || stopped) return;
  await startWorkers(["tracking"]);
}

export async function cancelTracking(runId: number) {
  const job = await TrackingJob.findOne({ where: { runId, state: { [Op.in]: ["queued", "running"] } }, order: [["id", "DESC"]] });
  if (!job) throw new JobError("There is no queued or running tracking job to cancel.", 409, "no_active_job");
  if (job.state === "queued") {
    await job.update({ state: "cancelled", finishedAt: new Date(), error: "Cancelled before it started." });
  } else {
    running.get(job.id)?.abort();
    // A worker in another process sees this at its next progress write or heartbeat and stops.
    abortLocalJob(job.id);
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

/** SQLite: the only runner, so the job is held simply by being "running"; a stop leaves it for the next start. */
async function runJob(job: TrackingJob) {
  const controller = new AbortController();
  running.set(job.id, controller);
  try {
    await runTrackingJob(job, { where: {}, fenced: false, stopping: () => stopped }, controller);
  } finally {
    running.delete(job.id);
  }
}

/**
 * At start: jobs that were running when the server stopped go back in the queue and resume. On
 * PostgreSQL only jobs whose worker's lease has run out: others are still being tracked elsewhere.
 */
export async function resumeInterruptedJobs() {
  stopped = false;
  if (usesJobQueue) {
    const taken = await sweepTrackingJobs();
    if (taken.length) console.log(`[tracking] resuming ${taken.length} interrupted job(s)`);
    await startLocalWorker();
    return taken.length;
  }
  const [count] = await TrackingJob.update({ state: "queued" }, { where: { state: "running" } });
  if (count) console.log(`[tracking] resuming ${count} interrupted job(s)`);
  kick();
  return count;
}

export async function stopTrackingQueue() {
  stopped = true;
  for (const c of running.values()) c.abort();
  await pumping?.catch(() => undefined);
  if (usesJobQueue) await stopWorkers();
  await stopFrameStreams();
  await closeTrackingPool();
}

/**
 * Resolves when the queue has nothing left to do (tests and the demo seeding wait on it). On
 * PostgreSQL: no job queued or running in the database and no tracking handler under way here.
 */
export async function whenTrackingIdle() {
  if (usesJobQueue) {
    for (;;) {
      const open = await TrackingJob.count({ where: { state: { [Op.in]: ["queued", "running"] } } });
      if (open === 0 && !localTrackingBusy()) return;
      await new Promise((r) => setTimeout(r, 100));
    }
  }
  while (pumping) await pumping;
}

// On PostgreSQL the shared queue's workers start with the "job-workers" hook (job-workers.ts).
onBoot({
  name: "tracking-queue",
  async start() {
    if (usesJobQueue) return;
    // This process takes the tracking jobs: its tracking thread is readied now rather than by the first job.
    readyTrackingInBackground();
    await resumeInterruptedJobs();
  },
  stop: stopTrackingQueue,
});
