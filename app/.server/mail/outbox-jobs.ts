import { Op } from "sequelize";
import { OutboxMail } from "../db";
import { ringMail } from "./outbox";
import type { OutboxSender } from "./outbox-sender";

/**
 * The outbox on PostgreSQL: each row has a doorbell in the shared queue (rung in the transaction
 * that wrote it), and whichever worker takes the doorbell sends the row. The row's lease still
 * decides who sends (two doorbells, or a doorbell pg-boss handed out again after a worker died,
 * never send one message twice while a sender is alive); the retry schedule stays the outbox's:
 * a failed attempt rings again for the row's next attempt.
 */
export async function deliverOutboxRow(outboxId: number, sender: OutboxSender): Promise<"sent" | "retried" | "failed" | "skipped"> {
  const row = await sender.claim(outboxId);
  if (!row) {
    // Not due yet (the doorbell came early, or a sweep rang it): ring again for its time.
    const current = await OutboxMail.findByPk(outboxId, { attributes: ["id", "state", "nextAttemptAt", "leaseUntil"] });
    if (current?.state === "queued" && current.nextAttemptAt.getTime() > Date.now() && (!current.leaseUntil || current.leaseUntil.getTime() <= Date.now())) {
      await ringMail(current);
    }
    return "skipped";
  }
  const outcome = await sender.deliver(row);
  if (outcome === "retried") {
    await row.reload({ attributes: ["id", "nextAttemptAt"] });
    await ringMail(row);
  }
  return outcome;
}

/**
 * Rings every queued row whose lease is free: rows written before the queue existed, rows whose
 * doorbell pg-boss gave up on, and rows whose sender died (once the 2-minute lease has run out). A
 * row that already has a waiting doorbell is left as it is.
 */
export async function sweepOutbox(now = new Date()): Promise<number> {
  const rows = await OutboxMail.findAll({
    attributes: ["id", "nextAttemptAt"],
    where: { state: "queued", [Op.or]: [{ leaseUntil: null }, { leaseUntil: { [Op.lte]: now } }] },
    order: [["id", "ASC"]],
  });
  let rung = 0;
  for (const row of rows) if (await ringMail(row)) rung++;
  return rung;
}
