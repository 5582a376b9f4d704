import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { Op } from "sequelize";
import { SMTPServer } from "smtp-server";
import { simpleParser } from "mailparser";
import { Detection, Equipment, OutboxMail, TrackingJob, type Run } from "../db";
import { boot, shutdown } from "../boot";
import "../features";
import { smallLab } from "../test-support";
import { createRun } from "../runs/service";
import { enqueueMail } from "../mail/outbox";
import { enqueueTracking } from "./tracking-queue";
import { createCalibration, signOffCalibration, toDayString } from "../calibrations";
import { calibrationReminderKey } from "../calibration-views";
import { QUEUES, queueClient, ring } from "./boss";
import { WorkerProcess, prepareRun, renderStack, tracksOf, waitFor } from "./testing";

// This process plays a web process told not to take jobs (set before env.ts is read); the workers
// are real `app/.server/worker.ts` processes on the same database and uploads folder.
vi.hoisted(() => {
  process.env.TANKSIDE_WORKERS = "0";
});

const onPostgres = /^postgres(ql)?:\/\//.test(process.env.DATABASE_URL ?? "");

describe.skipIf(!onPostgres)("the shared job queue on PostgreSQL (skipped on SQLite, which keeps its in-process queue: one machine, one process)", () => {
  /** What the mail relay received: subject → how many times. */
  const received = new Map<string, number>();
  let relay: SMTPServer;
  let relayUrl = "";
  const FRAMES = 120;
  let lab: Awaited<ReturnType<typeof smallLab>>;
  let stack: File[];
  const workers: WorkerProcess[] = [];
  /** Every worker gets a short lease, so a killed one is replaced in seconds rather than half a minute. */
  const startWorker = () => {
    const w = new WorkerProcess({ TANKSIDE_JOB_LEASE_S: "4", SMTP_URL: relayUrl, TANKSIDE_WORKERS: undefined });
    workers.push(w);
    return w;
  };
  const newRun = async (purpose: string, frames: File[] = stack) =>
    prepareRun(await createRun(lab.runInput({ setRateRpm: 15, purpose }), lab.tech), frames, lab.tech.id);
  const jobOf = (runId: number) => TrackingJob.findOne({ where: { runId }, order: [["id", "DESC"]] });
  const doneJob = (runId: number) => async () => {
    const job = await jobOf(runId);
    if (job && ["failed", "cancelled"].includes(job.state)) throw new Error(`job ${job.id} ended ${job.state}: ${job.error}`);
    return job?.state === "done" ? job : null;
  };

  beforeAll(async () => {
    relay = new SMTPServer({
      secure: false,
      disabledCommands: ["STARTTLS", "AUTH"],
      logger: false,
      onData(stream, _session, callback) {
        simpleParser(stream)
          .then((parsed) => {
            const subject = parsed.subject ?? "";
            received.set(subject, (received.get(subject) ?? 0) + 1);
            callback();
          })
          .catch((err: Error) => callback(err));
      },
    });
    await new Promise<void>((resolve) => relay.listen(0, "127.0.0.1", () => resolve()));
    relayUrl = `smtp://127.0.0.1:${(relay.server.address() as AddressInfo).port}`;
    await boot();
    lab = await smallLab();
    stack = await renderStack(FRAMES);
  }, 120_000);

  afterAll(async () => {
    await Promise.all(workers.map((w) => w.stop("SIGKILL")));
    await shutdown();
    await new Promise<void>((resolve) => relay.close(() => resolve()));
  });

  let reference: Awaited<ReturnType<typeof tracksOf>>;

  it("a job and a message enqueued by a web process with TANKSIDE_WORKERS=0 wait for a worker, and a worker process takes them", async () => {
    const run = await newRun("enqueued by the web side");
    const job = await enqueueTracking(run, lab.tech.id);
    const mail = (await enqueueMail({ to: "someone@tankside.example", subject: "Shared queue: from the web side", text: "hello" }))!;
    // Several of a worker's polling intervals: this process must not have taken either.
    await new Promise((r) => setTimeout(r, 3000));
    expect((await job.reload()).state).toBe("queued");
    expect((await mail.reload()).state).toBe("queued");

    const worker = startWorker();
    const name = await worker.ready();
    const done = await waitFor("the job to be done", doneJob(run.id), 120_000);
    expect(done.id).toBe(job.id);
    expect(done.attempts).toBe(1);
    expect(done.framesDone).toBe(FRAMES);
    expect(worker.jobsTaken()).toEqual([job.id]);
    expect(worker.output).toContain(`taken by ${name}`);
    await waitFor("the message to be sent", async () => (await mail.reload()).state === "sent", 30_000);
    expect(received.get("Shared queue: from the web side")).toBe(1);
    reference = await tracksOf(run.id);
    expect(reference.length).toBe(1);
    expect(reference[0]!.pointCount).toBeGreaterThanOrEqual(FRAMES - 1);
  }, 180_000);

  it("a worker killed with SIGKILL mid-job is replaced: another worker resumes from the stored detections, once, with the same tracks", async () => {
    const first = workers[0]!;
    const run = await newRun("worker killed mid-job");
    const job = await enqueueTracking(run, lab.tech.id);
    // Progress reaches the database the run page polls while the first worker tracks.
    const seen = await waitFor(
      "progress from the first worker",
      async () => {
        const j = await jobOf(run.id);
        return j && j.state === "running" && j.framesDone > 0 ? j : null;
      },
      120_000,
      20,
    );
    expect(seen.framesDone).toBeLessThan(FRAMES);
    first.proc.kill("SIGKILL");
    expect((await first.exited).signal).toBe("SIGKILL");

    // The job as the kill left it: running, held by a lease nobody renews.
    await job.reload();
    expect(job.state).toBe("running");
    expect(job.leaseOwner).not.toBeNull();
    const stoppedAt = job.resumeFromFrame;
    expect(stoppedAt).toBeGreaterThan(0);
    expect(stoppedAt).toBeLessThan(FRAMES);
    const kept = await Detection.findAll({ where: { jobId: job.id, frameIndex: { [Op.lt]: stoppedAt } }, attributes: ["id"] });
    expect(kept.length).toBeGreaterThan(0);

    const killedAt = Date.now();
    const second = startWorker();
    await second.ready();
    const done = await waitFor("the job to be finished by the second worker", doneJob(run.id), 120_000);
    console.log(
      `[measured] killed after frame ${stoppedAt} of ${FRAMES}; a new worker (4 s lease) finished the job ${((Date.now() - killedAt) / 1000).toFixed(1)} s after the kill`,
    );
    expect(done.id).toBe(job.id);
    expect(done.attempts).toBe(2);
    expect(done.framesDone).toBe(FRAMES);
    expect(second.jobsTaken()).toEqual([job.id]);
    expect(second.output).toContain(`[tracking] job ${job.id} (run ${run.id}) resumes at frame ${stoppedAt + 1} of ${FRAMES}`);
    // The frames the first worker had stored were not searched again: their rows are the same rows.
    const after = await Detection.findAll({ where: { jobId: job.id, frameIndex: { [Op.lt]: stoppedAt } }, attributes: ["id"] });
    expect(after.map((d) => d.id).sort((a, b) => a - b)).toEqual(kept.map((d) => d.id).sort((a, b) => a - b));
    // One job, done once, with the tracks of a run tracked in one go by one process.
    expect(await TrackingJob.count({ where: { runId: run.id } })).toBe(1);
    expect(await tracksOf(run.id)).toEqual(reference);
  }, 240_000);

  it("two workers and five runs: every run is tracked exactly once, by one worker, with the same tracks", async () => {
    const second = workers[1]!;
    const third = startWorker();
    await third.ready();
    const runs: Run[] = [];
    for (let i = 0; i < 5; i++) runs.push(await newRun(`five runs, ${i + 1}`));
    const before = { second: second.jobsTaken().length, third: third.jobsTaken().length };
    const jobs = [];
    for (const run of runs) jobs.push(await enqueueTracking(run, lab.tech.id));
    const started = Date.now();
    for (const run of runs) await waitFor(`run ${run.id} to be tracked`, doneJob(run.id), 300_000, 250);
    console.log(`[measured] five runs of ${FRAMES} frames tracked by two workers in ${((Date.now() - started) / 1000).toFixed(1)} s`);

    const taken = [...second.jobsTaken().slice(before.second), ...third.jobsTaken().slice(before.third)];
    expect(taken.sort((a, b) => a - b)).toEqual(jobs.map((j) => j.id).sort((a, b) => a - b));
    // Both workers had work: each took at least one of the five (one job at a time each).
    expect(second.jobsTaken().length - before.second).toBeGreaterThan(0);
    expect(third.jobsTaken().length - before.third).toBeGreaterThan(0);
    for (const run of runs) {
      const all = await TrackingJob.findAll({ where: { runId: run.id } });
      expect(all.map((j) => [j.state, j.attempts])).toEqual([["done", 1]]);
      expect(await tracksOf(run.id)).toEqual(reference);
    }
  }, 400_000);

  it("mail: every message of the outbox is sent exactly once with two workers taking doorbells", async () => {
    const subjects = Array.from({ length: 30 }, (_, i) => `Shared queue: message ${i + 1}`);
    await Promise.all(subjects.map((subject, i) => enqueueMail({ to: `person-${i}@tankside.example`, subject, text: `number ${i + 1}` })));
    await waitFor(
      "every message to be sent",
      async () => (await OutboxMail.count({ where: { subject: { [Op.in]: subjects }, state: "sent" } })) === subjects.length,
      60_000,
    );
    expect(subjects.map((s) => received.get(s) ?? 0)).toEqual(subjects.map(() => 1));
    const rows = await OutboxMail.findAll({ where: { subject: { [Op.in]: subjects } } });
    expect(rows.every((r) => r.attempts === 1)).toBe(true);
  }, 120_000);

  it("calibration reminders run in a worker from the shared queue (hourly on pg-boss's clock), each record's reminder sent once", async () => {
    const schedules = await (await queueClient()).getSchedules();
    expect(schedules.map((x) => [x.name, x.cron])).toContainEqual([QUEUES.reminders, "0 * * * *"]);
    const meter = await Equipment.create({ kind: "rate_meter", name: "Shared queue tachometer", meterType: "tachometer" } as never);
    const day = (n: number) => toDayString(new Date(Date.now() + n * 86_400_000));
    const cal = await createCalibration(
      {
        kind: "rate",
        equipmentId: lab.table.id,
        meterId: meter.id,
        performedOn: day(-170),
        dueOn: day(5),
        readings: [5, 10, 15, 20].map((r) => ({ setRpm: r, measuredRpm: r })),
      },
      lab.tech,
    );
    await signOffCalibration(cal.id, lab.manager);
    // Two passes, as the hourly slot and a worker's start would ring them.
    await ring(QUEUES.reminders, "test-pass-1", {});
    const row = await waitFor(
      "the reminder to be queued and sent",
      async () => {
        const r = await OutboxMail.findOne({ where: { dedupeKey: calibrationReminderKey(cal.id) } });
        return r?.state === "sent" ? r : null;
      },
      60_000,
      250,
    );
    const second = (await ring(QUEUES.reminders, "test-pass-2", {}))!;
    const boss = await queueClient();
    await waitFor(
      "the second pass to be done",
      async () => (await boss.getJobById(QUEUES.reminders, second, { includeArchive: true }))?.state === "completed",
      60_000,
      250,
    );
    expect(await OutboxMail.count({ where: { dedupeKey: calibrationReminderKey(cal.id) } })).toBe(1);
    expect(received.get(row.subject)).toBe(1);
  }, 120_000);

  it("a worker stopped with SIGTERM mid-job hands the job back at once, and the other worker resumes it", async () => {
    const [second, third] = [workers[1]!, workers[2]!];
    // A run long enough (a few seconds of tracking) that the signal surely lands mid-job: the
    // 120-frame run can be finished between the first progress the test sees and the signal. The
    // job stores its first frames at once (tracking-run.ts), so the first progress seen is early.
    const LONG = 360;
    const run = await newRun("worker stopped mid-job", await renderStack(LONG));
    const job = await enqueueTracking(run, lab.tech.id);
    const seen = await waitFor(
      "a worker to make progress",
      async () => {
        const j = await jobOf(run.id);
        return j && j.state === "running" && j.framesDone > 0 ? j : null;
      },
      120_000,
      20,
    );
    expect(seen.framesDone).toBeLessThan(LONG / 2);
    const holder = seen.leaseOwner;
    const [leaving, staying] = second.output.includes(`as ${holder}`) ? [second, third] : [third, second];
    const staysTaken = staying.jobsTaken().length;
    await leaving.stop("SIGTERM");
    expect((await leaving.exited).code).toBe(0);
    // Handed back at once rather than left for its lease to run out.
    const handedBack = leaving.output.match(new RegExp(`\\[tracking\\] job ${job.id} handed back to the queue after frame (\\d+)`));
    expect(handedBack).not.toBeNull();
    const stoppedAt = Number(handedBack![1]);
    expect(stoppedAt).toBeGreaterThan(0);
    const kept = await Detection.findAll({ where: { jobId: job.id, frameIndex: { [Op.lt]: stoppedAt } }, attributes: ["id"] });
    expect(kept.length).toBeGreaterThan(0);
    const done = await waitFor("the other worker to finish the job", doneJob(run.id), 120_000);
    expect(done.attempts).toBe(2);
    expect(done.framesDone).toBe(LONG);
    expect(staying.jobsTaken().slice(staysTaken)).toEqual([job.id]);
    expect(staying.output).toContain(`job ${job.id} (run ${run.id}) resumes at frame ${stoppedAt + 1} of ${LONG}`);
    // The frames stored before the hand-back were not searched again, and the float is one whole track.
    const after = await Detection.findAll({ where: { jobId: job.id, frameIndex: { [Op.lt]: stoppedAt } }, attributes: ["id"] });
    expect(after.map((d) => d.id).sort((a, b) => a - b)).toEqual(kept.map((d) => d.id).sort((a, b) => a - b));
    expect(await TrackingJob.count({ where: { runId: run.id } })).toBe(1);
    const tracks = await tracksOf(run.id);
    expect(tracks.length).toBe(1);
    expect(tracks[0]!.pointCount).toBeGreaterThanOrEqual(LONG - 1);
  }, 240_000);
});
