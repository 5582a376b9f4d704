import { Umzug, SequelizeStorage } from "umzug";
import { sequelize } from "./connection";
import { migrations } from "./migrations";

export function createMigrator() {
  return new Umzug({
    migrations: migrations.map((m) => ({ name: m.name, up: m.up, down: m.down })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: "schema_migrations" }),
    logger: undefined,
  });
}

/** Applies every pending migration; safe to call on each start. Returns the names applied now. */
export async function migrate(): Promise<string[]> {
  const applied = await createMigrator().up();
  return applied.map((m) => m.name);
}
