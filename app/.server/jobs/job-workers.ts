import crypto from "node:crypto";
import os from "node:os";
import PgBoss from "pg-boss";
import { onBoot } from "../boot";
import { env } from "../env";
import { OutboxSender } from "../mail/outbox-sender";
import { setEnqueueListener } from "../mail/outbox";
import { deliverOutboxRow, sweepOutbox } from "../mail/outbox-jobs";
import { runCalibrationReminders } from "../calibration-reminders";
import { closeTrackingPool, readyTrackingInBackground } from "../tracking/tracking-pool";
import { QUEUES, bossOptions, createQueues, queueClient, stopQueueClient, usesJobQueue } from "./boss";
import { claimTrackingJob, handBack, heartbeatMs, leaseUntilLiteral, renewLease, sweepMs, sweepTrackingJobs } from "./tracking-leases";
import { runTrackingJob } from "./tracking-run";

/**
 * The shared queue's workers in this process (PostgreSQL only): `npm run worker`, and the web
 * process unless TANKSIDE_WORKERS=0. Each takes one tracking job at a time (the thread pool already
 * uses every core for its frames), up to five messages at a time, and the reminder passes.
 */
export type WorkKind = "tracking" | "mail" | "reminders";
export const ALL_WORK: WorkKind[] = ["tracking", "mail", "reminders"];

/** How long a free worker waits before asking the queue again (a doorbell rung in this process wakes it at once). */
const POLL_SECONDS = 1;
const MAIL_SWEEP_MS = 60_000;

/** Unique per process, readable in the tracking_jobs table and the logs. */
export const workerName = `${os.hostname()}:${process.pid}:${crypto.randomBytes(3).toString("hex")}`;

interface State {
  boss: PgBoss;
  started: Set<WorkKind>;
  workerIds: Map<WorkKind, string>;
  timers: NodeJS.Timeout[];
}
let state: Promise<State> | null = null;
let stopping = false;
/** Tracking jobs running in this process, to abort on cancel or stop. */
const running = new Map<number, AbortController>();
/** Tracking doorbells being handled in this process (tests and the seeding wait for them). */
let busy = 0;

function every(ms: number, task: () => Promise<unknown>, label: string) {
  let pass: Promise<unknown> | null = null;
  const timer = setInterval(() => {
    pass ??= task()
      .catch((err) => console.error(`[jobs] ${label} failed:`, err instanceof Error ? err.message : err))
      .finally(() => (pass = null));
  }, ms);
  timer.unref();
  return timer;
}

async function trackOne(trackingJobId: number) {
  // Thrown, so pg-boss hands the doorbell out again later instead of this process taking the job.
  if (stopping) throw new Error("this worker is stopping");
  const claim = await claimTrackingJob(trackingJobId, workerName);
  // Finished, cancelled, or held by a live worker: nothing to do. (A queued job whose run is busy is rung again by the sweep.)
  if (claim.kind !== "claimed") return;
  console.log(`[tracking] job ${trackingJobId} (run ${claim.job.runId}) taken by ${workerName} (attempt ${claim.job.attempts + 1})`);
  const controller = new AbortController();
  running.set(trackingJobId, controller);
  const beat = setInterval(() => {
    renewLease(trackingJobId, workerName)
      .then((held) => {
        if (!held) controller.abort();
      })
      .catch((err) => console.error(`[tracking] heartbeat of job ${trackingJobId} failed:`, err instanceof Error ? err.message : err));
  }, heartbeatMs());
  try {
    await runTrackingJob(
      claim.job,
      {
        where: { leaseOwner: workerName },
        fenced: true,
        progress: () => ({ leaseUntil: leaseUntilLiteral() }),
        release: { leaseOwner: null, leaseUntil: null },
        stopping: () => stopping,
        handBack: (job) => handBack(job.id, workerName),
      },
      controller,
    );
  } finally {
    clearInterval(beat);
    running.delete(trackingJobId);
  }
}

function counted<T>(handler: (jobs: PgBoss.Job<T>[]) => Promise<void>) {
  return async (jobs: PgBoss.Job<T>[]) => {
    busy++;
    try {
      await handler(jobs);
    } finally {
      busy--;
    }
  };
}

async function register(s: State, kind: WorkKind) {
  const { boss } = s;
  if (kind === "tracking") {
    const id = await boss.work<{ trackingJobId: number }>(
      QUEUES.tracking,
      { batchSize: 1, pollingIntervalSeconds: POLL_SECONDS },
      counted(async (jobs) => {
        for (const job of jobs) await trackOne(job.data.trackingJobId);
      }),
    );
    s.workerIds.set(kind, id);
    // This process takes tracking jobs: its tracking thread is readied now rather than by the first job.
    readyTrackingInBackground();
    // Jobs whose worker died are taken back; queued jobs whose doorbell was lost are rung again.
    await sweepTrackingJobs();
    s.timers.push(every(sweepMs(), sweepTrackingJobs, "tracking sweep"));
  } else if (kind === "mail") {
    const sender = new OutboxSender({ owner: workerName });
    const id = await boss.work<{ outboxId: number }>(QUEUES.mail, { batchSize: 5, pollingIntervalSeconds: POLL_SECONDS }, async (jobs) => {
      for (const job of jobs) await deliverOutboxRow(job.data.outboxId, sender);
    });
    s.workerIds.set(kind, id);
    // Mail committed in this process is sent at once, not at the next poll.
    setEnqueueListener(() => boss.notifyWorker(id));
    await sweepOutbox();
    s.timers.push(every(MAIL_SWEEP_MS, () => sweepOutbox(), "outbox sweep"));
  } else {
    const id = await boss.work(QUEUES.reminders, { batchSize: 1, pollingIntervalSeconds: 5 }, async () => {
      const result = await runCalibrationReminders();
      if (result.queued.length) console.log(`[reminders] calibration reminders queued: ${result.queued.length}`);
    });
    s.workerIds.set(kind, id);
    // Every hour on the hour (pg-boss's clock sends one job per slot, whichever worker sees it first), and once at start.
    await boss.schedule(QUEUES.reminders, "0 * * * *", {}, { singletonKey: "hourly" });
    await boss.send(QUEUES.reminders, {}, { singletonKey: "at-start", singletonSeconds: 300 });
  }
  s.started.add(kind);
}

/** Starts taking the given kinds of job in this process (idempotent). */
export async function startWorkers(kinds: WorkKind[] = ALL_WORK): Promise<void> {
  if (!usesJobQueue) throw new Error("Workers of the shared job queue need PostgreSQL.");
  void env.jobLeaseSeconds; // a bad TANKSIDE_JOB_LEASE_S stops the start, not the first job
  stopping = false;
  state ??= (async () => {
    await queueClient(); // creates pg-boss's schema and Tankside's queues
    const boss = new PgBoss(bossOptions({ supervise: true, schedule: true, maintenanceIntervalSeconds: 60 }));
    boss.on("error", (err) => console.error("[jobs] worker:", err.message));
    await boss.start();
    await createQueues(boss);
    return { boss, started: new Set<WorkKind>(), workerIds: new Map(), timers: [] };
  })();
  const s = await state;
  for (const kind of kinds) if (!s.started.has(kind)) await register(s, kind);
}

export function workersStarted(kind: WorkKind): Promise<boolean> {
  return state ? state.then((s) => s.started.has(kind)) : Promise.resolve(false);
}

/** A doorbell was rung in this process: a free local worker takes it now rather than at its next poll. */
export function notifyWorker(kind: WorkKind) {
  void state?.then((s) => {
    const id = s.workerIds.get(kind);
    if (id) s.boss.notifyWorker(id);
  });
}

/** Aborts a tracking job if it runs in this process (a cancel from this process's page). */
export function abortLocalJob(jobId: number) {
  running.get(jobId)?.abort();
}

export function localTrackingBusy() {
  return busy > 0;
}

/**
 * Stops taking jobs: a tracking job under way is handed back at once (another worker resumes it
 * from its stored detections), a message being sent finishes, then pg-boss lets go.
 */
export async function stopWorkers() {
  const current = state;
  state = null;
  if (!current) return;
  stopping = true;
  const s = await current.catch(() => null);
  if (!s) return;
  for (const t of s.timers) clearInterval(t);
  if (s.started.has("mail")) setEnqueueListener(null);
  for (const c of running.values()) c.abort();
  await s.boss.stop({ graceful: true, timeout: 30_000, wait: true });
}

onBoot({
  name: "job-workers",
  async start() {
    if (!usesJobQueue) return;
    await queueClient();
    if (env.runsJobs) {
      await startWorkers(ALL_WORK);
      console.log(`[jobs] this process takes tracking, mail and reminder jobs from the shared queue as ${workerName}`);
    } else {
      console.log("[jobs] TANKSIDE_WORKERS=0: background jobs are left to `npm run worker` processes");
    }
  },
  async stop() {
    await stopWorkers();
    await closeTrackingPool();
    await stopQueueClient();
  },
});
