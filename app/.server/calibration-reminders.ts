import { Op, UniqueConstraintError } from "sequelize";
import { CalibrationReminder, User } from "./db";
import { env } from "./env";
import { onBoot } from "./boot";
import { sendMail } from "./mail/send";
import { getLabSettings } from "./settings";
import { listCalibrationsDueOrExpired } from "./calibrations";
import { calibrationKindLabels } from "~/lib/calibrations";
import { formatDate } from "~/lib/format";

/** A claim this old whose send never reported back (the process died mid-send) may be tried again. */
const STALE_CLAIM_MS = 30 * 60_000;
const INTERVAL_MS = 60 * 60_000;

/**
 * Claims the right to send one record's reminder. The claim is a row keyed by the record (an insert
 * that only one caller can win), or, for a failed or stale attempt, a conditional update that only
 * one caller can win; so neither a second task nor a restarted server sends it again.
 */
async function claim(calibrationId: number, now: Date): Promise<boolean> {
  try {
    await CalibrationReminder.create({ calibrationId, state: "sending", claimedAt: now, sentAt: null, attempts: 1, lastError: null });
    return true;
  } catch (err) {
    if (!(err instanceof UniqueConstraintError)) throw err;
  }
  const [count] = await CalibrationReminder.update(
    { state: "sending", claimedAt: now, attempts: CalibrationReminder.sequelize!.literal("attempts + 1") as unknown as number },
    {
      where: {
        calibrationId,
        [Op.or]: [{ state: "failed" }, { state: "sending", claimedAt: { [Op.lt]: new Date(now.getTime() - STALE_CLAIM_MS) } }],
      },
    },
  );
  return count > 0;
}

export interface ReminderRunResult {
  sent: number[];
  failed: { id: number; error: string }[];
}

/** One pass of the reminder task: every record due within the lab's reminder days gets one e-mail to the lab managers. */
export async function runCalibrationReminders(now: Date = new Date()): Promise<ReminderRunResult> {
  const settings = await getLabSettings();
  const due = await listCalibrationsDueOrExpired(settings.calibrationReminderDays, now);
  const result: ReminderRunResult = { sent: [], failed: [] };
  if (due.length === 0) return result;
  const managers = await User.findAll({ where: { role: "lab_manager", active: true } });
  for (const cal of due) {
    if (!(await claim(cal.id, now))) continue;
    const what = `${calibrationKindLabels[cal.kind]} of ${cal.equipmentName}`;
    const when = formatDate(cal.dueAt);
    const mail = await sendMail({
      to: managers.map((m) => m.email),
      subject: cal.pastDue ? `Calibration past due: ${what} (due ${when})` : `Calibration due ${when}: ${what}`,
      text: [
        cal.pastDue
          ? `The ${what.toLowerCase()} was due on ${when} and is no longer in force. Runs made with it are flagged until a new record is signed off.`
          : `The ${what.toLowerCase()} falls due on ${when} (in ${cal.daysLeft} days).`,
        "",
        `The record: ${env.appUrl}/calibrations/${cal.id}`,
        `Record a new calibration: ${env.appUrl}/calibrations/new?equipmentId=${cal.equipmentId}&kind=${cal.kind}`,
        "",
        "You get this once per record because you are a lab manager in Tankside.",
      ].join("\n"),
    });
    if (mail.ok) {
      await CalibrationReminder.update({ state: "sent", sentAt: new Date(), lastError: null }, { where: { calibrationId: cal.id } });
      result.sent.push(cal.id);
    } else {
      await CalibrationReminder.update({ state: "failed", lastError: mail.error }, { where: { calibrationId: cal.id } });
      result.failed.push({ id: cal.id, error: mail.error });
    }
  }
  return result;
}

let timer: NodeJS.Timeout | null = null;
let running: Promise<unknown> | null = null;

function tick() {
  // One pass at a time within the process; the database claim guards across processes.
  running ??= runCalibrationReminders()
    .then((r) => {
      if (r.sent.length || r.failed.length) console.log(`[reminders] calibration reminders sent ${r.sent.length}, failed ${r.failed.length}`);
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
