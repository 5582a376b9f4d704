import type { Transaction } from "sequelize";

/**
 * Options for a read that locks the rows it finds until the transaction ends: pass them where a
 * transaction checks a row and then writes on the strength of that check (a booking's item before
 * the overlap check, a run before its sign-off). A second transaction asking for the same row waits
 * for the first to commit, then reads what it wrote.
 *
 * On PostgreSQL this is SELECT … FOR NO KEY UPDATE: it excludes itself and every UPDATE of the row,
 * but not the key-share locks other transactions take when they insert rows that point at it, so
 * adding a frame to one run does not wait for a booking of its camera. SQLite has no row locks and
 * Sequelize leaves the clause out there; the write queue already runs one write transaction at a
 * time. Take locks at the start of a transaction, parent rows first, in one order everywhere
 * (booking before its item; users by id), so two transactions never wait for each other.
 */
export function locking(transaction: Transaction) {
  return { transaction, lock: transaction.LOCK.NO_KEY_UPDATE };
}
