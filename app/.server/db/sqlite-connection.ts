import sqlite3 from "sqlite3";

/** How long a connection waits for another process's lock before SQLite answers SQLITE_BUSY. */
export const SQLITE_BUSY_TIMEOUT_MS = 10_000;

/**
 * Set on every connection before Sequelize uses it:
 * - WAL: readers never wait for the writer and the writer never waits for readers;
 * - synchronous=NORMAL: with WAL, a commit survives a crash of the process; an OS crash or power
 *   loss may undo the last commits but leaves the file consistent (SQLite's PRAGMA synchronous
 *   documentation, sqlite.org/pragma.html#pragma_synchronous);
 * - foreign_keys=ON: SQLite leaves them off per connection unless asked.
 * journal_mode is kept in the file; the others last as long as the connection.
 */
const SETTINGS = "PRAGMA journal_mode=WAL; PRAGMA synchronous=NORMAL; PRAGMA foreign_keys=ON;";

/**
 * sqlite3's Database, set up in its open callback. Sequelize's SQLite connection manager opens
 * connections itself (one shared, and a fresh one per transaction) with `new lib.Database(file,
 * mode, callback)`, waits for that callback, and never runs the `afterConnect` hook — so this is
 * the one place where every connection passes before its first query.
 */
class ConfiguredDatabase extends sqlite3.Database {
  constructor(filename: string, mode: number, callback?: (err: Error | null) => void) {
    super(filename, mode, function (this: sqlite3.Database, err: Error | null) {
      if (err) return callback?.(err);
      this.configure("busyTimeout", SQLITE_BUSY_TIMEOUT_MS);
      this.exec(SETTINGS, (setupErr) => callback?.(setupErr));
    });
  }
}

/** What Sequelize takes as `dialectModule`: sqlite3 with the configured Database. */
export const sqliteDialectModule = { ...sqlite3, Database: ConfiguredDatabase };
