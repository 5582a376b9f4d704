import { Op, QueryTypes, type Transaction } from "sequelize";
import { Run, TrackingJob, sequelize } from "../db";
import { env } from "../env";
import { QUEUES, ring } from "./boss";

/**
 * How a tracking job is held on PostgreSQL, where several worker processes share the queue.
 *
 * A worker claims a job by setting `lease_owner` to itself and `lease_until` to the database's
 * now() plus one lease, in a transaction that locks the job row and then the run's row; it renews
 * the lease with every progress write and a heartbeat, and every write it makes is conditional on
 * still holding it (tracking-run.ts). A worker killed mid-job stops renewing: once its lease has run
 * out, any worker's sweep puts the job back in the queue with a fresh doorbell, and the next worker
 * resumes it from its stored detections (`resume_from_frame`). The database's clock decides, so
 * machines whose clocks differ agree on when a lease has run out.
 */

export const leaseSeconds = () => env.jobLeaseSeconds;
/** The lease is renewed this often, so two missed beats still leave it held. */
export const heartbeatMs = () => Math.max(500, (leaseSeconds() * 1000) / 3);
/** Workers look for jobs whose lease ran out (and queued jobs without a doorbell) this often. */
export const sweepMs = () => Math.max(1000, (leaseSeconds() * 1000) / 2);

export const leaseUntilLiteral = () => sequelize.literal(`now() + interval '${Math.round(leaseSeconds() * 1000)} milliseconds'`);

export const trackingKey = (jobId: number) => `tracking-job-${jobId}`;

/** Rings the doorbell of a tracking job: at most one waits per job (pg-boss's short policy). */
export function ringTracking(jobId: number, transaction?: Transaction) {
  return ring(QUEUES.tracking, trackingKey(jobId), { trackingJobId: jobId }, { transaction });
}

export type Claim = { kind: "claimed"; job: TrackingJob } | { kind: "finished" } | { kind: "busy"; reason: string };

/**
 * Takes the job for `owner` unless it is finished, held by a live lease, or another job of the same
 * run is being tracked. The run's row is locked too, so two workers never track one run at once even
 * when two jobs of it were queued.
 */
export async function claimTrackingJob(jobId: number, owner: string): Promise<Claim> {
  return sequelize.transaction(async (transaction) => {
    const job = await TrackingJob.findByPk(jobId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!job || !["queued", "running"].includes(job.state)) return { kind: "finished" } as const;
    const [lease] = await sequelize.query<{ live: boolean }>(
      `SELECT (lease_until IS NOT NULL AND lease_until > now()) AS live FROM tracking_jobs WHERE id = :id`,
      { replacements: { id: jobId }, type: QueryTypes.SELECT, transaction },
    );
    if (lease?.live && job.leaseOwner !== owner) return { kind: "busy", reason: `held by ${job.leaseOwner}` } as const;
    await Run.findByPk(job.runId, { attributes: ["id"], transaction, lock: transaction.LOCK.UPDATE });
    const other = await TrackingJob.findOne({
      attributes: ["id"],
      where: { runId: job.runId, id: { [Op.ne]: job.id }, state: "running", leaseUntil: { [Op.gt]: sequelize.fn("now") } },
      transaction,
    });
    if (other) return { kind: "busy", reason: `job ${other.id} of the same run is being tracked` } as const;
    await job.update({ state: "running", leaseOwner: owner, leaseUntil: leaseUntilLiteral() }, { transaction });
    await job.reload({ transaction });
    return { kind: "claimed", job } as const;
  });
}

/** Renews the lease; false when the job is no longer this owner's (cancelled, or taken over). */
export async function renewLease(jobId: number, owner: string): Promise<boolean> {
  const [n] = await TrackingJob.update({ leaseUntil: leaseUntilLiteral() }, { where: { id: jobId, state: "running", leaseOwner: owner } });
  return n === 1;
}

/** A stopping worker hands its job back at once, so another resumes it without waiting for the lease. */
export async function handBack(jobId: number, owner: string) {
  await sequelize.transaction(async (transaction) => {
    const [n] = await TrackingJob.update(
      { state: "queued", leaseOwner: null, leaseUntil: null },
      { where: { id: jobId, state: "running", leaseOwner: owner }, transaction },
    );
    if (!n) return;
    await ringTracking(jobId, transaction);
    const job = await TrackingJob.findByPk(jobId, { attributes: ["resumeFromFrame"], transaction });
    console.log(`[tracking] job ${jobId} handed back to the queue after frame ${job?.resumeFromFrame ?? 0}`);
  });
}

/**
 * Puts back in the queue every running job whose lease has run out (its worker was killed, or the
 * machine lost its network), and rings a doorbell for every queued job (a doorbell already waiting
 * makes that a no-op), so nothing waits on a doorbell that was lost. Returns the jobs taken back.
 */
export async function sweepTrackingJobs(): Promise<number[]> {
  const taken = await sequelize.transaction(async (transaction) => {
    const rows = await sequelize.query<{ id: number }>(
      `UPDATE tracking_jobs SET state = 'queued', lease_owner = NULL, lease_until = NULL, updated_at = now()
       WHERE state = 'running' AND (lease_until IS NULL OR lease_until <= now()) RETURNING id`,
      { type: QueryTypes.SELECT, transaction },
    );
    for (const { id } of rows) await ringTracking(id, transaction);
    return rows.map((r) => r.id);
  });
  if (taken.length) console.log(`[tracking] taken back from a worker that stopped answering: job(s) ${taken.join(", ")}`);
  const queued = await TrackingJob.findAll({ attributes: ["id"], where: { state: "queued" }, order: [["id", "ASC"]] });
  for (const { id } of queued) await ringTracking(id);
  return taken;
}
