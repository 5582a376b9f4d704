import { afterAll, describe, expect, it } from "vitest";
import { QueryTypes, type Transaction } from "sequelize";
import { POSTGRES_SESSION, isSqlite, sequelize } from "./connection";
import { env } from "../env";

afterAll(() => sequelize.close());

async function sqliteSettings(transaction?: Transaction) {
  const read = async (pragma: string) =>
    Object.values((await sequelize.query<Record<string, unknown>>(`PRAGMA ${pragma}`, { type: QueryTypes.SELECT, transaction }))[0]!)[0];
  return {
    journal_mode: await read("journal_mode"),
    busy_timeout: await read("busy_timeout"),
    synchronous: await read("synchronous"),
    foreign_keys: await read("foreign_keys"),
  };
}

// SQLite's PRAGMA documentation (sqlite.org/pragma.html): synchronous 1 is NORMAL; busy_timeout is in ms.
const sqliteIntended = { journal_mode: "wal", busy_timeout: 10_000, synchronous: 1, foreign_keys: 1 };

// PRAGMAs exist on SQLite only; the PostgreSQL connection's own settings are read back below.
describe.skipIf(!isSqlite)("SQLite connection settings", () => {
  it("the shared connection runs in WAL with a 10 s busy timeout, synchronous=NORMAL and foreign keys on", async () => {
    expect(await sqliteSettings()).toEqual(sqliteIntended);
  });

  it("so does the connection a transaction opens for itself", async () => {
    await sequelize.transaction(async (t) => {
      expect(await sqliteSettings(t)).toEqual(sqliteIntended);
    });
  });
});

/** What the server says this session runs with, and where each value came from ("client": this connection asked for it). */
async function postgresSettings(transaction?: Transaction) {
  const rows = await sequelize.query<{ name: string; setting: string; source: string }>(
    "SELECT name, setting, source FROM pg_settings WHERE name IN ('default_transaction_isolation', 'transaction_isolation', 'idle_in_transaction_session_timeout', 'application_name') ORDER BY name",
    { type: QueryTypes.SELECT, transaction },
  );
  return Object.fromEntries(rows.map((r) => [r.name, r.name === "transaction_isolation" ? r.setting : `${r.setting} (${r.source})`]));
}

// PostgreSQL's documentation (runtime-config-client.html, view-pg-settings.html): transaction_isolation
// is the running transaction's level, default_transaction_isolation what each new one starts with; a
// source of "client" means the connection set it, so no server or database default can change it.
const postgresIntended = {
  application_name: `${POSTGRES_SESSION.applicationName} (client)`,
  default_transaction_isolation: "read committed (client)",
  idle_in_transaction_session_timeout: `${POSTGRES_SESSION.idleInTransactionTimeoutMs} (client)`,
  transaction_isolation: "read committed",
};

describe.skipIf(isSqlite)("PostgreSQL connection settings", () => {
  it("the shared connection runs READ COMMITTED, names itself and ends a transaction left idle for a minute", async () => {
    expect(await postgresSettings()).toEqual(postgresIntended);
  });

  it("so does every transaction", async () => {
    await sequelize.transaction(async (t) => {
      expect(await postgresSettings(t)).toEqual(postgresIntended);
    });
  });

  it("opens at most DATABASE_POOL_MAX connections (10 unless set)", () => {
    expect(sequelize.config.pool?.max).toBe(env.databasePoolMax);
    expect(env.databasePoolMax).toBe(Number(process.env.DATABASE_POOL_MAX || 10));
  });
});
