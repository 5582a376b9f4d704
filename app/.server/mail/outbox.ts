import { Op, UniqueConstraintError, type Transaction } from "sequelize";
import { OutboxMail } from "../db";
import { QUEUES, ring, usesJobQueue } from "../jobs/boss";
import type { OutboxMailView } from "../openapi/responses/people";
import type { OutgoingMail } from "./send";

/**
 * The retry schedule: after the n-th failed attempt the next one waits 1 min × 2^(n−1), at most
 * 1 h (1, 2, 4, 8, 16, 32, 60, 60, 60 min); the 10th failure marks the row failed, about 4 h after
 * the first attempt.
 */
export const FIRST_RETRY_MS = 60_000;
export const MAX_RETRY_MS = 60 * 60_000;
export const MAX_ATTEMPTS = 10;
/** A claimed row whose sender never reported back (it crashed) is free again after this. */
export const LEASE_MS = 2 * 60_000;

export function retryDelayMs(failedAttempts: number): number {
  return Math.min(MAX_RETRY_MS, FIRST_RETRY_MS * 2 ** Math.max(0, failedAttempts - 1));
}

type Listener = () => void;
let onEnqueued: Listener | null = null;

/** The sender registers here to be woken when a transaction that enqueued mail has committed. */
export function setEnqueueListener(listener: Listener | null) {
  onEnqueued = listener;
}

function wake() {
  // After the response's own work: the commit hook must not wait for delivery.
  if (onEnqueued) setImmediate(onEnqueued);
}

export interface EnqueueOptions {
  /** The transaction of the change that causes the mail: the row exists iff the change commits. */
  transaction?: Transaction;
  /** Enqueue at most once per key, ever (a calibration's reminder). */
  dedupeKey?: string;
}

/**
 * Puts one message in the outbox. Returns the row, or null when there is nobody to send it to or a
 * message with the same dedupe key was enqueued before. The sender delivers it after the commit.
 */
export async function enqueueMail(message: OutgoingMail, options: EnqueueOptions = {}): Promise<OutboxMail | null> {
  const recipients = [...new Set((Array.isArray(message.to) ? message.to : [message.to]).map((r) => r.trim()).filter(Boolean))];
  if (recipients.length === 0) {
    console.warn(`[mail] "${message.subject}" has no recipients; nothing was queued`);
    return null;
  }
  const { transaction, dedupeKey } = options;
  const row = {
    recipients: recipients.join(", "),
    subject: message.subject,
    textBody: message.text,
    htmlBody: message.html ?? null,
    nextAttemptAt: new Date(),
    dedupeKey: dedupeKey ?? null,
  };
  let created: OutboxMail;
  if (dedupeKey) {
    // The unique key decides; a savepoint keeps a losing insert from aborting the caller's transaction (PostgreSQL).
    const existing = await OutboxMail.findOne({ where: { dedupeKey }, transaction });
    if (existing) return null;
    try {
      created = await OutboxMail.sequelize!.transaction({ transaction }, (t) => OutboxMail.create(row, { transaction: t }));
    } catch (err) {
      if (err instanceof UniqueConstraintError) return null;
      throw err;
    }
  } else {
    created = await OutboxMail.create(row, { transaction });
  }
  if (transaction) transaction.afterCommit(() => announce(created));
  else announce(created);
  return created;
}

/**
 * Tells the sender a row is due. PostgreSQL: the shared queue's doorbell is rung once the row has
 * committed, outside the caller's transaction, so a queue that is slow or down never holds up or
 * fails the change itself; a ring lost to a crash or an error is made good by the workers' outbox
 * sweep (mail/outbox-jobs.ts).
 */
function announce(row: OutboxMail) {
  if (!usesJobQueue) return wake();
  void ringMail(row).then(wake, (err: unknown) => {
    console.error(`[mail] "${row.subject}" waits for the outbox sweep: the queue was not reached (${err instanceof Error ? err.message : String(err)})`);
  });
}

export type SendAgainOutcome = { ok: true; row: OutboxView } | { ok: false; status: 404 | 409; code: "not_found" | "not_failed"; message: string };

/**
 * The lab manager sends a failed message again (the relay was down for hours, an address was
 * mended at the relay): the row is queued afresh, its attempts counted from nought, with the
 * earlier error kept until the next attempt. Only a failed row: a queued one is on its way and a
 * sent one went out, and sending either again would duplicate it. A link in the text may have
 * expired meanwhile; the page says so.
 */
export async function sendAgain(id: number): Promise<SendAgainOutcome> {
  const [changed] = await OutboxMail.update(
    { state: "queued", attempts: 0, nextAttemptAt: new Date(), leaseOwner: null, leaseUntil: null },
    { where: { id, state: "failed" } },
  );
  const row = await OutboxMail.findByPk(id, { attributes: { exclude: ["textBody", "htmlBody"] } });
  if (!row) return { ok: false, status: 404, code: "not_found", message: "No such message in the outbox." };
  if (changed === 0) {
    const what = row.state === "sent" ? "it was sent" : "it is still queued and will be tried again by itself";
    return { ok: false, status: 409, code: "not_failed", message: `Only a failed message can be sent again; ${what}.` };
  }
  announce(row);
  return { ok: true, row: outboxView(row) };
}

/**
 * PostgreSQL: rings the shared queue's doorbell for one outbox row, due at its next attempt. At most
 * one doorbell per row waits (the key), so the periodic sweep may ring every queued row.
 */
export function ringMail(row: Pick<OutboxMail, "id" | "nextAttemptAt">, transaction?: Transaction) {
  return ring(QUEUES.mail, `mail-${row.id}`, { outboxId: row.id }, { transaction, startAfter: row.nextAttemptAt });
}

export type OutboxView = OutboxMailView;

/** The newest rows first, without bodies: they may hold single-use links meant for one person only. */
export async function listOutbox(limit = 100): Promise<OutboxView[]> {
  const rows = await OutboxMail.findAll({
    attributes: { exclude: ["textBody", "htmlBody"] },
    order: [["id", "DESC"]],
    limit,
  });
  return rows.map(outboxView);
}

function outboxView(r: OutboxMail): OutboxView {
  return {
    id: r.id,
    recipients: r.recipients ? r.recipients.split(", ") : [],
    subject: r.subject,
    state: r.state,
    attempts: r.attempts,
    sending: r.state === "queued" && r.leaseUntil !== null && r.leaseUntil.getTime() > Date.now(),
    nextAttemptAt: r.state === "queued" ? r.nextAttemptAt.toISOString() : null,
    lastError: r.lastError,
    sentAt: r.sentAt?.toISOString() ?? null,
    createdAt: r.createdAt.toISOString(),
  };
}

/** The outbox row of a dedupe key, for pages that show whether a one-off message went out. */
export function findOutboxByKeys(keys: string[]) {
  if (keys.length === 0) return Promise.resolve([] as OutboxMail[]);
  return OutboxMail.findAll({ attributes: { exclude: ["textBody", "htmlBody"] }, where: { dedupeKey: { [Op.in]: keys } } });
}

/** What a service tells its caller about the mail its change caused: queued, or nobody to send it to. */
export type MailQueued = { queued: true; id: number } | { queued: false };

export function mailQueued(row: OutboxMail | null): MailQueued {
  return row ? { queued: true, id: row.id } : { queued: false };
}
