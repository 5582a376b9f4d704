import { Sequelize, Transaction, type Options } from "sequelize";
import sqlite3 from "sqlite3";
import { env } from "../env";

/**
 * One Sequelize instance per process (kept on globalThis so a dev reload does not open a second one).
 * DATABASE_URL picks the database: `sqlite:<path>` for a file, or a postgres:// URL.
 */
function createSequelize(url: string): Sequelize {
  const common: Options = { logging: false, define: { underscored: true } };
  if (url.startsWith("sqlite:")) {
    const storage = url.replace(/^sqlite:(\/\/)?/, "");
    return new Sequelize({
      ...common,
      dialect: "sqlite",
      dialectModule: sqlite3,
      storage,
      // Writers take SQLite's write lock when their transaction begins, so two of them wait their
      // turn (busy timeout) instead of failing when a read lock cannot be upgraded.
      transactionType: Transaction.TYPES.IMMEDIATE,
      // Each connection (transactions get their own) waits on a lock instead of failing at once.
      hooks: {
        afterConnect: async (connection: unknown) => {
          const db = connection as sqlite3.Database;
          db.configure("busyTimeout", 10_000);
          await new Promise<void>((resolve, reject) =>
            db.exec("PRAGMA journal_mode=WAL; PRAGMA foreign_keys=ON; PRAGMA synchronous=NORMAL;", (err) =>
              err ? reject(err) : resolve(),
            ),
          );
        },
      },
    });
  }
  return new Sequelize(url, common);
}

const globalKey = "__tanksideSequelize" as const;
type GlobalWithDb = typeof globalThis & { [globalKey]?: { url: string; sequelize: Sequelize } };
const g = globalThis as GlobalWithDb;

if (!g[globalKey] || g[globalKey].url !== env.databaseUrl) {
  g[globalKey] = { url: env.databaseUrl, sequelize: createSequelize(env.databaseUrl) };
}

export const sequelize = g[globalKey].sequelize;
export const isSqlite = sequelize.getDialect() === "sqlite";
