import pg from "pg";
import { Umzug, SequelizeStorage } from "umzug";
import { env } from "../env";
import { sequelize, isSqlite } from "./connection";
import { migrations } from "./migrations";

/** Any fixed number: the PostgreSQL advisory lock that lets one starting process migrate at a time. */
const MIGRATION_LOCK = 7_284_615_001;

export function createMigrator() {
  return new Umzug({
    migrations: migrations.map((m) => ({ name: m.name, up: m.up, down: m.down })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: "schema_migrations" }),
    logger: undefined,
  });
}

/**
 * Applies every pending migration; safe to call on each start. Returns the names applied now.
 * On PostgreSQL several processes (web servers, workers) may start at once: each first takes an
 * advisory lock on a connection of its own (outside Sequelize's pool), so one migrates and the
 * others then find nothing pending.
 */
export async function migrate(): Promise<string[]> {
  if (isSqlite) return (await createMigrator().up()).map((m) => m.name);
  const lock = new pg.Client({ connectionString: env.databaseUrl });
  await lock.connect();
  try {
    await lock.query("SELECT pg_advisory_lock($1)", [MIGRATION_LOCK]);
    return (await createMigrator().up()).map((m) => m.name);
  } finally {
    // Ending the session releases the lock too, should the unlock itself fail.
    await lock.query("SELECT pg_advisory_unlock($1)", [MIGRATION_LOCK]).catch(() => undefined);
    await lock.end();
  }
}
