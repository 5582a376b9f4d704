import { Umzug, SequelizeStorage } from "umzug";
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
 * On PostgreSQL several processes (web servers, workers) may start at once: each waits for a
 * transaction-scoped advisory lock, so one migrates and the others then find nothing pending.
 */
export async function migrate(): Promise<string[]> {
  if (isSqlite) return (await createMigrator().up()).map((m) => m.name);
  return sequelize.transaction(async (transaction) => {
    await sequelize.query(`SELECT pg_advisory_xact_lock(${MIGRATION_LOCK})`, { transaction });
    return (await createMigrator().up()).map((m) => m.name);
  });
}
