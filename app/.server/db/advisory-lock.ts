import pg from "pg";
import { env } from "../env";

/**
 * Work that several processes starting at once on one PostgreSQL database must do one at a time
 * (web servers and workers each migrate the schema and make the job queue's queues at start).
 * Each number names one such piece of work; any fixed number serves.
 */
export const ADVISORY_LOCKS = {
  migrations: 7_284_615_001,
  queues: 7_284_615_002,
} as const;

/**
 * Runs `work` holding the database's advisory lock `key`, taken on a connection of its own: a
 * session lock on a pooled connection would be held by whichever query used it next. Ending the
 * session releases the lock too, so a process that dies holding it does not keep the others waiting.
 */
export async function withAdvisoryLock<T>(key: number, work: () => Promise<T>): Promise<T> {
  const lock = new pg.Client({ connectionString: env.databaseUrl, application_name: "tankside-start" });
  await lock.connect();
  try {
    await lock.query("SELECT pg_advisory_lock($1)", [key]);
    return await work();
  } finally {
    await lock.query("SELECT pg_advisory_unlock($1)", [key]).catch(() => undefined);
    await lock.end();
  }
}
