import { QueryTypes, type Sequelize, type Transaction, type TransactionOptions } from "sequelize";

/**
 * SQLite lets one connection write at a time. Left to SQLite, writers that find the lock taken
 * sleep and retry inside the driver, and past the busy timeout fail with SQLITE_BUSY — under a
 * burst of requests some do. Here writers queue in this process instead: first come, first
 * served, and SQLite only ever sees one writer from us. Reads never wait (WAL lets them run
 * beside the writer).
 *
 * What takes a turn in the queue:
 * - a transaction, from BEGIN to COMMIT or ROLLBACK (managed, or unmanaged as Sequelize's own
 *   findOrCreate makes them);
 * - a write outside any transaction (e.g. `Model.create` without `{ transaction }`), for that one
 *   statement.
 * What does not: reads, and anything run with `{ transaction }` (it is part of a turn already —
 * savepoints from `sequelize.transaction({ transaction: t })` included).
 *
 * A write that would wait for the turn its own caller holds could never get it: a new transaction,
 * or a write without `{ transaction }`, started inside a transaction's callback. transaction-scope.ts
 * refuses those at once, on either database.
 */

/** First in, first out: `turn()` resolves when every earlier turn has been released. */
export class WriteQueue {
  private tail: Promise<void> = Promise.resolve();
  private waiting = 0;

  /** Turns asked for and not yet released (the one running included). */
  get length() {
    return this.waiting;
  }

  async turn(): Promise<() => void> {
    const previous = this.tail;
    let free!: () => void;
    this.tail = new Promise<void>((resolve) => (free = resolve));
    this.waiting++;
    await previous;
    let released = false;
    return () => {
      if (released) return;
      released = true;
      this.waiting--;
      free();
    };
  }

  async run<T>(fn: () => Promise<T>): Promise<T> {
    const release = await this.turn();
    try {
      return await fn();
    } finally {
      release();
    }
  }
}

const READ_TYPES = new Set<string>([
  QueryTypes.SELECT,
  QueryTypes.SHOWTABLES,
  QueryTypes.SHOWINDEXES,
  QueryTypes.DESCRIBE,
  QueryTypes.FOREIGNKEYS,
  QueryTypes.VERSION,
]);

/** Reads by their query type; raw SQL only if it plainly reads (SELECT, or a PRAGMA that sets nothing). */
export function isRead(sql: unknown, type: string | undefined): boolean {
  if (type && READ_TYPES.has(type)) return true;
  const text = typeof sql === "string" ? sql : typeof sql === "object" && sql && "query" in sql ? String(sql.query) : "";
  return /^\s*SELECT\b/i.test(text) || (/^\s*PRAGMA\b/i.test(text) && !text.includes("="));
}

type TransactionFn = (options?: TransactionOptions, autoCallback?: (t: Transaction) => PromiseLike<unknown>) => Promise<unknown>;
type QueryFn = (sql: unknown, options?: { transaction?: Transaction | null; type?: string }) => Promise<unknown>;

/** Puts every write of this Sequelize instance through one queue (SQLite only: one writer per file). */
export function queueWrites(sequelize: Sequelize, queue = new WriteQueue()): WriteQueue {
  const transaction = (sequelize.transaction as TransactionFn).bind(sequelize);
  const query = (sequelize.query as QueryFn).bind(sequelize);

  const queuedTransaction: TransactionFn = async (optionsOrCallback, maybeCallback) => {
    const [options, autoCallback] =
      typeof optionsOrCallback === "function" ? [undefined, optionsOrCallback as (t: Transaction) => PromiseLike<unknown>] : [optionsOrCallback, maybeCallback];
    // A savepoint inside a transaction runs on that transaction's connection, within its turn.
    if (options?.transaction) return transaction(options, autoCallback);
    const release = await queue.turn();
    if (autoCallback) {
      try {
        return await transaction(options, autoCallback);
      } finally {
        release();
      }
    }
    // Unmanaged: the turn ends when the caller commits or rolls back.
    let t: Transaction;
    try {
      t = (await transaction(options)) as Transaction;
    } catch (err) {
      release();
      throw err;
    }
    const commit = t.commit.bind(t);
    const rollback = t.rollback.bind(t);
    t.commit = () => commit().finally(release);
    t.rollback = () => rollback().finally(release);
    return t;
  };

  const queuedQuery: QueryFn = (sql, options) => {
    if (options?.transaction || isRead(sql, options?.type)) return query(sql, options);
    return queue.run(() => query(sql, options));
  };

  Object.assign(sequelize, { transaction: queuedTransaction, query: queuedQuery });
  return queue;
}
