import { Umzug, SequelizeStorage } from "umzug";
import { sequelize, isSqlite } from "./connection";
import { migrations } from "./migrations";
import { ADVISORY_LOCKS, withAdvisoryLock } from "./advisory-lock";

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
 * advisory lock (advisory-lock.ts), so one migrates and the others then find nothing pending.
 */
export async function migrate(): Promise<string[]> {
  if (isSqlite) return (await createMigrator().up()).map((m) => m.name);
  return withAdvisoryLock(ADVISORY_LOCKS.migrations, async () => (await createMigrator().up()).map((m) => m.name));
}
