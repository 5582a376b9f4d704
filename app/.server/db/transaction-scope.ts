import { AsyncLocalStorage } from "node:async_hooks";
import type { Sequelize, Transaction, TransactionOptions } from "sequelize";

/**
 * Inside a transaction's callback, every query passes `{ transaction }`. One that does not runs on
 * another connection, outside the transaction: it does not see the transaction's own writes; on
 * SQLite a write waits for the turn its own transaction holds (write-queue.ts), forever; on
 * PostgreSQL it takes a second connection from the pool, and a pool's worth of transactions each
 * waiting for one more connection stalls every request until the pool's acquire timeout. The
 * same goes for a new transaction started there. Both fail at once with OutsideTransactionError,
 * on either database, so a test finds the mistake instead of a busy day.
 */
export class OutsideTransactionError extends Error {
  constructor(what: string) {
    super(`${what} was started inside a transaction's callback without that transaction; pass { transaction } to it.`);
    this.name = "OutsideTransactionError";
  }
}

/** Which transaction callback the running code is inside, if any (closed when the callback's transaction ends). */
const scope = new AsyncLocalStorage<{ open: boolean }>();

function refuseInsideCallback(what: string) {
  if (scope.getStore()?.open) throw new OutsideTransactionError(what);
}

/**
 * PostgreSQL's answer when it had to break a tie between transactions: a deadlock (40P01), or a
 * serialization failure (40001, only under REPEATABLE READ or SERIALIZABLE, which Tankside does
 * not use). The victim's transaction was rolled back whole, so running it again is safe.
 */
const RETRYABLE = new Set(["40P01", "40001"]);
const MAX_ATTEMPTS = 3;

export function isRetryable(err: unknown): boolean {
  const code = (err as { parent?: { code?: unknown } } | null)?.parent?.code;
  return typeof code === "string" && RETRYABLE.has(code);
}

type TransactionFn = (options?: TransactionOptions, autoCallback?: (t: Transaction) => PromiseLike<unknown>) => Promise<unknown>;
type QueryFn = (sql: unknown, options?: { transaction?: Transaction | null }) => Promise<unknown>;

/**
 * Wraps `sequelize.transaction` and `sequelize.query` (every model call goes through the latter):
 * refuses queries and transactions started inside a callback without its transaction, and runs a
 * managed transaction that PostgreSQL chose as a deadlock victim again, up to three times in all.
 * Savepoints (`{ transaction: t }`) pass through untouched; an unmanaged transaction (no callback,
 * as Sequelize's own findOrCreate makes) is refused inside a callback like any other, and otherwise
 * neither scoped nor retried: its caller commits or rolls back.
 */
export function scopeTransactions(sequelize: Sequelize) {
  const transaction = (sequelize.transaction as TransactionFn).bind(sequelize);
  const query = (sequelize.query as QueryFn).bind(sequelize);

  const scopedTransaction: TransactionFn = async (optionsOrCallback, maybeCallback) => {
    const [options, callback] =
      typeof optionsOrCallback === "function" ? [undefined, optionsOrCallback as (t: Transaction) => PromiseLike<unknown>] : [optionsOrCallback, maybeCallback];
    if (options?.transaction) return transaction(options, callback);
    refuseInsideCallback("A new transaction");
    if (!callback) return transaction(options);
    for (let attempt = 1; ; attempt++) {
      const current = { open: true };
      try {
        return await scope.run(current, () => transaction(options, callback));
      } catch (err) {
        if (attempt >= MAX_ATTEMPTS || !isRetryable(err)) throw err;
      } finally {
        current.open = false;
      }
    }
  };

  const scopedQuery: QueryFn = async (sql, options) => {
    if (!options?.transaction) refuseInsideCallback("A query without { transaction }");
    return query(sql, options);
  };

  Object.assign(sequelize, { transaction: scopedTransaction, query: scopedQuery });
}
