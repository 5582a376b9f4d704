import { User } from "./db";
import { env } from "./env";
import { onBoot } from "./boot";
import { usesJobQueue } from "./jobs/boss";
import { enqueueMail } from "./mail/outbox";
import { getLabSettings } from "./settings";
import { listCalibrationsDueOrExpired } from "./calibrations-in-force";
import { calibrationReminderKey } from "./calibration-views";
import { calibrationKindLabels } from "~/lib/calibrations";
import { timeFormat } from "~/lib/time-format";

const INTERVAL_MS = 60 * 60_000;

export interface ReminderRunResult {
  /** Records whose reminder was queued by this pass. */
  queued: number[];
}

/**
 * One pass of the reminder task: every record due within the lab's reminder days gets one e-mail to
 * the lab managers. The outbox row carries the record's key, which is unique: whichever pass (or
 * process) inserts it first enqueues the reminder, and no later pass does, even after a restart.
 * Delivery, retries and failure are the outbox's.
 */
export async function runCalibrationReminders(now: Date = new Date()): Promise<ReminderRunResult> {
  const settings = await getLabSettings();
  const due = await listCalibrationsDueOrExpired(settings.calibrationReminderDays, now);
  const result: ReminderRunResult = { queued: [] };
  if (due.length === 0) return result;
  const managers = await User.findAll({ where: { role: "lab_manager", active: true } });
  // With nobody to tell, nothing is queued: the next pass tries again once there is a lab manager.
  if (managers.length === 0) return result;
  const time = timeFormat(settings.timeZone);
  for (const cal of due) {
    // The equipment's name as it was written; only the kind of calibration reads in lower case mid-sentence.
    const kind = calibrationKindLabels[cal.kind];
    const what = `${kind} of ${cal.equipmentName}`;
    const inSentence = `${kind.charAt(0).toLowerCase()}${kind.slice(1)} of ${cal.equipmentName}`;
    const when = time.date(cal.dueAt);
    const row = await enqueueMail(
      {
        to: managers.map((m) => m.email),
        subject: cal.pastDue ? `Calibration past due: ${what} (due ${when})` : `Calibration due ${when}: ${what}`,
        text: [
          cal.pastDue
            ? `The ${inSentence} was due on ${when} and is no longer in force. Runs made with it are flagged until a new record is signed off.`
            : `The ${inSentence} falls due on ${when} (in ${cal.daysLeft} day${cal.daysLeft === 1 ? "" : "s"}).`,
          "",
          `The record: ${env.appUrl}/calibrations/${cal.id}`,
          `Record a new calibration: ${env.appUrl}/calibrations/new?equipmentId=${cal.equipmentId}&kind=${cal.kind}`,
          "",
          "You get this once per record because you are a lab manager in Tankside.",
        ].join("\n"),
      },
      { dedupeKey: calibrationReminderKey(cal.id) },
    );
    if (row) result.queued.push(cal.id);
  }
  return result;
}

let timer: NodeJS.Timeout | null = null;
let running: Promise<unknown> | null = null;

function tick() {
  // One pass at a time within the process; the outbox's unique key guards across processes.
  running ??= runCalibrationReminders()
    .then((r) => {
      if (r.queued.length) console.log(`[reminders] calibration reminders queued: ${r.queued.length}`);
    })
    .catch((err) => console.error("[reminders] calibration reminder pass failed:", err))
    .finally(() => {
      running = null;
    });
  return running;
}

onBoot({
  name: "calibration-reminders",
  start() {
    // On PostgreSQL the shared queue's workers run the pass (hourly, and when a worker starts).
    if (usesJobQueue) return;
    void tick();
    timer = setInterval(() => void tick(), INTERVAL_MS);
    timer.unref();
  },
  async stop() {
    if (timer) clearInterval(timer);
    timer = null;
    await running;
  },
});
