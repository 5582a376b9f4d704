import crypto from "node:crypto";
import { Op, type WhereOptions } from "sequelize";
import type { Transporter } from "nodemailer";
import { OutboxMail, sequelize } from "../db";
import { onBoot } from "../boot";
import { usesJobQueue } from "../jobs/boss";
import { deliverMail, getTransporter } from "./send";
import { LEASE_MS, MAX_ATTEMPTS, retryDelayMs, setEnqueueListener } from "./outbox";

/** Without a wake-up (mail enqueued by another process, a retry coming due) the sender looks this often. */
const POLL_MS = 30_000;
/** After a database error the sender waits this long before looking again, instead of spinning. */
const ERROR_PAUSE_MS = 5_000;

export interface SenderOptions {
  /** The SMTP transport; by default the one SMTP_URL (or the fake server) gives. */
  transport?: () => Promise<Transporter>;
  /** The clock, so tests can step past a lease or a back-off without waiting. */
  now?: () => Date;
  leaseMs?: number;
  owner?: string;
}

export interface DrainResult {
  sent: number[];
  retried: number[];
  failed: number[];
}

/**
 * Delivers due outbox rows. A row is claimed by a conditional UPDATE that sets this sender's lease
 * (and counts the attempt), so two senders never hold the same row at once; a sender that dies
 * mid-send leaves the lease to expire, and the row goes out again (at least once, never lost).
 */
export class OutboxSender {
  readonly owner: string;
  private readonly transport: () => Promise<Transporter>;
  private readonly now: () => Date;
  private readonly leaseMs: number;
  private running: Promise<DrainResult> | null = null;
  private again = false;
  private timer: NodeJS.Timeout | null = null;
  private started = false;
  /** The latest wake-up's pass and scheduling, so stop() can wait for it. */
  private settled: Promise<void> = Promise.resolve();

  constructor(options: SenderOptions = {}) {
    this.owner = options.owner ?? `sender-${process.pid}-${crypto.randomBytes(4).toString("hex")}`;
    this.transport = options.transport ?? getTransporter;
    this.now = options.now ?? (() => new Date());
    this.leaseMs = options.leaseMs ?? LEASE_MS;
  }

  private free(now: Date): WhereOptions<OutboxMail> {
    return { [Op.or]: [{ leaseUntil: null }, { leaseUntil: { [Op.lte]: now } }] };
  }

  /** Takes the lease on the next due row, or returns null when none is due and free. */
  async claimNext(): Promise<OutboxMail | null> {
    const now = this.now();
    const candidates = await OutboxMail.findAll({
      attributes: ["id"],
      where: { state: "queued", nextAttemptAt: { [Op.lte]: now }, ...this.free(now) },
      order: [
        ["nextAttemptAt", "ASC"],
        ["id", "ASC"],
      ],
      limit: 5,
    });
    for (const { id } of candidates) {
      const row = await this.take(id, now, { state: "queued", ...this.free(now) });
      if (row) return row;
    }
    return null;
  }

  /**
   * Takes the lease on one row named by a doorbell of the shared queue (PostgreSQL), if it is
   * queued, due and free; null otherwise (sent, failed, not due yet, or held by another sender).
   */
  claim(id: number): Promise<OutboxMail | null> {
    const now = this.now();
    return this.take(id, now, { state: "queued", nextAttemptAt: { [Op.lte]: now }, ...this.free(now) });
  }

  private async take(id: number, now: Date, where: WhereOptions<OutboxMail>): Promise<OutboxMail | null> {
    const [won] = await OutboxMail.update(
      { leaseOwner: this.owner, leaseUntil: new Date(now.getTime() + this.leaseMs), attempts: sequelize.literal("attempts + 1") },
      { where: { ...where, id } },
    );
    return won === 1 ? OutboxMail.findByPk(id) : null;
  }

  /** Sends one claimed row and records the outcome; only while this sender still holds its lease. */
  async deliver(row: OutboxMail): Promise<"sent" | "retried" | "failed"> {
    const mine = { id: row.id, leaseOwner: this.owner };
    try {
      await deliverMail({ to: row.recipients.split(", "), subject: row.subject, text: row.textBody, html: row.htmlBody ?? undefined }, await this.transport());
    } catch (err) {
      const error = err instanceof Error ? err.message : String(err);
      const giveUp = row.attempts >= MAX_ATTEMPTS;
      const next = new Date(this.now().getTime() + retryDelayMs(row.attempts));
      console.error(
        `[mail] attempt ${row.attempts} of "${row.subject}" to ${row.recipients} failed: ${error}${giveUp ? "; giving up" : `; next try ${next.toISOString()}`}`,
      );
      await OutboxMail.update(
        giveUp
          ? { state: "failed", lastError: error, leaseOwner: null, leaseUntil: null }
          : { nextAttemptAt: next, lastError: error, leaseOwner: null, leaseUntil: null },
        { where: mine },
      );
      return giveUp ? "failed" : "retried";
    }
    const [recorded] = await OutboxMail.update(
      { state: "sent", sentAt: this.now(), lastError: null, leaseOwner: null, leaseUntil: null, textBody: "", htmlBody: null },
      { where: mine },
    );
    if (recorded !== 1) console.warn(`[mail] "${row.subject}" went out after this sender's lease ran out; it may be sent twice`);
    return "sent";
  }

  /** Delivers every row due now, one at a time. Concurrent calls share one pass (and ask for another). */
  drain(): Promise<DrainResult> {
    if (this.running) {
      this.again = true;
      return this.running;
    }
    const pass = (async () => {
      const result: DrainResult = { sent: [], retried: [], failed: [] };
      do {
        this.again = false;
        for (let row = await this.claimNext(); row; row = await this.claimNext()) {
          result[await this.deliver(row)].push(row.id);
        }
      } while (this.again);
      return result;
    })();
    this.running = pass.finally(() => {
      this.running = null;
    });
    return this.running;
  }

  /** Runs a pass now (or right after the one under way); for the commit hook. */
  wake() {
    if (!this.started) return;
    this.settled = this.drain()
      .then(() => this.scheduleNext())
      .catch((err) => {
        console.error("[mail] outbox pass failed:", err);
        this.arm(ERROR_PAUSE_MS);
      });
  }

  /** Until the next retry comes due or a lease runs out, at most POLL_MS. */
  private async scheduleNext() {
    if (!this.started) return;
    const now = this.now();
    const [due, leased] = await Promise.all([
      OutboxMail.min<Date | string | null, OutboxMail>("nextAttemptAt", { where: { state: "queued", ...this.free(now) } }),
      OutboxMail.min<Date | string | null, OutboxMail>("leaseUntil", { where: { state: "queued", leaseUntil: { [Op.gt]: now } } }),
    ]);
    const times = [due, leased].filter((t): t is Date | string => t !== null && t !== undefined).map((t) => new Date(t).getTime());
    const wait = times.length ? Math.min(...times) - now.getTime() : POLL_MS;
    this.arm(Math.min(POLL_MS, Math.max(10, wait)));
  }

  private arm(ms: number) {
    if (!this.started) return;
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => this.wake(), ms);
    this.timer.unref();
  }

  /** Starts delivering: at once (rows left by a previous process), then on every wake-up and timer. */
  start() {
    this.started = true;
    setEnqueueListener(() => this.wake());
    this.wake();
  }

  async stop() {
    this.started = false;
    setEnqueueListener(null);
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    await this.settled;
  }
}

let active: OutboxSender | null = null;

onBoot({
  name: "mail-outbox",
  start() {
    // On PostgreSQL the shared queue's workers send (mail/outbox-jobs.ts); this sender is SQLite's.
    if (usesJobQueue) return;
    active = new OutboxSender();
    active.start();
  },
  async stop() {
    await active?.stop();
    active = null;
  },
});
