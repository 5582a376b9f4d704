import PgBoss from "pg-boss";
import type { Transaction } from "sequelize";
import { isSqlite } from "../db";
import { ADVISORY_LOCKS, withAdvisoryLock } from "../db/advisory-lock";
import { env } from "../env";

/**
 * pg-boss, the job queue that several processes share on PostgreSQL. On SQLite none of this runs:
 * the in-process queues stay (a single machine, a single process writing the file).
 *
 * Each pg-boss job is a doorbell that names a row of ours (a tracking job, an outbox message); the
 * row stays the record the pages read. Handlers are idempotent: a doorbell for a row that is done,
 * or held by a live worker, does nothing. So a doorbell rung twice is harmless, and the queues
 * use pg-boss's `short` policy with a key per row, which keeps at most one waiting doorbell per row.
 */
export const usesJobQueue = !isSqlite;

export const QUEUES = {
  /** data: { trackingJobId } — the tracking job's lease (tracking-leases.ts) guards the run. */
  tracking: "tankside-tracking",
  /** data: { outboxId } — the outbox row's lease guards the message. */
  mail: "tankside-mail",
  /** data: {} — a pass of the calibration reminders; their outbox keys make a second pass harmless. */
  reminders: "tankside-calibration-reminders",
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];

/**
 * What pg-boss itself retries: a handler that threw (the database went away) or a doorbell whose
 * handler never answered. Tracking is guarded by its own heartbeat (a lost worker is noticed in
 * about one lease), so pg-boss's expiry there is only a backstop for a job longer than any real one.
 * A mail send is bounded by the SMTP timeouts (40 s), so its doorbell expires after 3 minutes and
 * pg-boss hands it to another worker, by then past the outbox row's 2-minute lease.
 */
const QUEUE_OPTIONS: Record<QueueName, PgBoss.Queue> = {
  [QUEUES.tracking]: { name: QUEUES.tracking, policy: "short", retryLimit: 5, retryDelay: 5, retryBackoff: true, expireInSeconds: 12 * 3600 },
  [QUEUES.mail]: { name: QUEUES.mail, policy: "short", retryLimit: 5, retryDelay: 10, retryBackoff: true, expireInSeconds: 180 },
  [QUEUES.reminders]: { name: QUEUES.reminders, policy: "short", retryLimit: 2, retryDelay: 60, expireInSeconds: 600 },
};

/** The options every PgBoss of this app is made with; a worker adds maintenance and the cron clock. */
export function bossOptions(extra: Partial<PgBoss.ConstructorOptions> = {}): PgBoss.ConstructorOptions {
  return {
    connectionString: env.databaseUrl,
    schema: "pgboss",
    application_name: "tankside",
    max: 4,
    supervise: false,
    schedule: false,
    ...extra,
  };
}

/**
 * Makes this app's queues where they are missing. pg-boss's create_queue makes a partition table and
 * adds keys to the job table; two processes doing it at once on a fresh database deadlock in
 * PostgreSQL, and one of them dies at start-up. So the making is done under an advisory lock of the
 * database (advisory-lock.ts), and a process that finds the queues there once it has the lock makes
 * nothing.
 */
export async function createQueues(boss: PgBoss) {
  const wanted = Object.values(QUEUE_OPTIONS);
  const missing = async () => {
    const have = new Set((await boss.getQueues()).map((q) => q.name));
    return wanted.filter((q) => !have.has(q.name));
  };
  if ((await missing()).length === 0) return;
  await withAdvisoryLock(ADVISORY_LOCKS.queues, async () => {
    for (const options of await missing()) await boss.createQueue(options.name, options);
  });
}

const key = "__tanksideBossClient" as const;
const g = globalThis as typeof globalThis & { [key]?: Promise<PgBoss> };

/** This process's pg-boss for sending (every process sends; only workers take jobs). Started once. */
export function queueClient(): Promise<PgBoss> {
  if (!usesJobQueue) return Promise.reject(new Error("The shared job queue needs PostgreSQL."));
  g[key] ??= (async () => {
    const boss = new PgBoss(bossOptions());
    boss.on("error", (err) => console.error("[jobs] queue client:", err.message));
    await boss.start();
    await createQueues(boss);
    return boss;
  })();
  g[key].catch(() => {
    g[key] = undefined;
  });
  return g[key];
}

export async function stopQueueClient() {
  const started = g[key];
  g[key] = undefined;
  if (started) await (await started.catch(() => null))?.stop({ graceful: false });
}

/** pg-boss runs its SQL on the connection of our transaction, so the doorbell commits with the change. */
function onTransaction(transaction: Transaction): PgBoss.Db {
  const connection = (transaction as unknown as { connection: { query(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } }).connection;
  return { executeSql: (text, values) => connection.query(text, values) };
}

export interface RingOptions {
  /** Ring in this transaction: the doorbell exists exactly when the change commits. */
  transaction?: Transaction;
  startAfter?: Date;
}

/**
 * Rings the doorbell of one row. The key makes a second ring while one is still waiting a no-op
 * (pg-boss answers null), which is what the periodic sweeps rely on.
 */
export async function ring(queue: QueueName, key: string, data: object, options: RingOptions = {}): Promise<string | null> {
  const boss = await queueClient();
  const send: PgBoss.SendOptions = { singletonKey: key };
  if (options.startAfter && options.startAfter.getTime() > Date.now()) send.startAfter = options.startAfter;
  if (options.transaction) send.db = onTransaction(options.transaction);
  return boss.send(queue, data, send);
}
