import { z } from "zod";
import { SIGN_OFF_RULES, settingLimits, timeZoneError, type SettingKey } from "../settings";
import { isTimeZone } from "../time-format";
import { evenWithFieldErrors, strictNumber } from "./fields";

const wholeDays: SettingKey[] = ["rateCalibrationIntervalDays", "scaleCalibrationIntervalDays", "timingCheckIntervalDays", "calibrationReminderDays"];

function field(key: SettingKey) {
  const { min, max, label, unit } = settingLimits[key];
  const inRange = z
    .number()
    .min(min, `${label} must be at least ${amount(min, unit)}.`)
    .max(max, `${label} must be at most ${amount(max, unit)}.`);
  const n = z.coerce
    .number({ error: `${label}: enter a number.` })
    .refine(Number.isFinite, `${label} must be a number.`)
    .pipe(wholeDays.includes(key) ? inRange.int(`${label} must be a whole number of days.`) : inRange);
  return strictNumber(z.preprocess((v) => (v === "" ? undefined : v), n));
}

/** "1 day", "14 days": the unit's singular for exactly one. */
export function amount(n: number, unit: string) {
  return n === 1 && /^(days|hours)$/.test(unit) ? `1 ${unit.slice(0, -1)}` : `${n} ${unit}`;
}

/** The lab manager's settings form; limits and labels come from the one list in lib/settings. */
export const labSettingsSchema = z
  .object({
    checkTolerancePct: field("checkTolerancePct"),
    spinUpTimesToWait: field("spinUpTimesToWait"),
    rateCalibrationIntervalDays: field("rateCalibrationIntervalDays"),
    scaleCalibrationIntervalDays: field("scaleCalibrationIntervalDays"),
    timingCheckIntervalDays: field("timingCheckIntervalDays"),
    calibrationReminderDays: field("calibrationReminderDays"),
    sessionIdleHours: field("sessionIdleHours"),
    // Left out (an older form or script): the lab's choice stays as it is.
    rateSource: z.enum(["calibrated", "footage"], { error: "Choose which rate the theory check uses." }).optional(),
    // Left out: the lab's rule stays as it is.
    signOffRule: z.enum(SIGN_OFF_RULES, { error: "Choose who may sign off a calibration." }).optional(),
    // Empty (or left out) means the server's own zone.
    timeZone: z
      .string()
      .optional()
      .transform((v) => (v ?? "").trim())
      .refine((v) => v === "" || isTimeZone(v), { error: (issue) => timeZoneError(String(issue.input)) }),
  })
  .superRefine((v, ctx) => {
    const shortest = Math.min(v.rateCalibrationIntervalDays, v.scaleCalibrationIntervalDays, v.timingCheckIntervalDays);
    if (v.calibrationReminderDays >= shortest) {
      ctx.addIssue({
        code: "custom",
        path: ["calibrationReminderDays"],
        message: `The reminder must come sooner than the shortest interval (${shortest} days), or it would go out the day a record is made.`,
      });
    }
  }, evenWithFieldErrors);
