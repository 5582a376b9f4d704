/**
 * A session ends this many hours after sign-in however busy it is (OWASP ASVS 4.0.3 V3.3.2, level 2:
 * re-authentication at least every 12 hours). Fixed, not a lab setting: it is the ceiling the
 * idle timeout below lives under.
 */
export const SESSION_ABSOLUTE_HOURS = 12;

export { DEFAULT_RATE_SOURCE, RATE_SOURCES, type RateSource } from "./analysis/rate-choice";
import type { RateSource } from "./analysis/rate-choice";

/** The lab's own rules, kept as settings a lab manager changes; the values here are the defaults. */
export const settingDefaults = {
  /** Verdict tolerance: |f measured − f predicted| within this share of |f predicted| agrees. */
  checkTolerancePct: 3,
  /** How many spin-up times to wait after the table reaches its rate before filming. */
  spinUpTimesToWait: 5,
  /** Calibration intervals in days, per kind. */
  rateCalibrationIntervalDays: 180,
  scaleCalibrationIntervalDays: 365,
  timingCheckIntervalDays: 365,
  /** Reminder e-mail this many days before a calibration falls due. */
  calibrationReminderDays: 14,
  /** A signed-in session ends after this many hours without a request (OWASP ASVS 4.0.3 V3.3.2). */
  sessionIdleHours: 8,
} as const;

/** The numeric settings; the lab's time zone, a name, is kept beside them. */
export type NumberSettings = { -readonly [K in keyof typeof settingDefaults]: number };
export type SettingKey = keyof NumberSettings;

export type LabSettings = NumberSettings & {
  /** Which rate the theory check uses when the footage gave one too (lib/analysis/rate-choice). */
  rateSource: RateSource;
  /** The IANA time zone every page, e-mail and printout shows times in. */
  timeZone: string;
  /** True while no zone is set and the server's own is used. */
  timeZoneIsServerDefault: boolean;
  /** A calibration is signed off by someone other than the person who performed it (on unless the lab turns it off). */
  signOffBySecondPerson: boolean;
};

/** The row keys of the settings that are not numbers. */
export const TIME_ZONE_SETTING = "timeZone";
export const LAB_ID_SETTING = "labId";
export const RATE_SOURCE_SETTING = "rateSource";
/** The row that turns the second-person rule for calibration sign-off off ("anyone"); no row means it is on. */
export const SIGN_OFF_SETTING = "calibrationSignOff";
export const SIGN_OFF_RULES = ["second_person", "anyone"] as const;
export type SignOffRule = (typeof SIGN_OFF_RULES)[number];
export const signOffRuleLabels: Record<SignOffRule, string> = {
  second_person: "By a second person: a lab manager may not sign off a calibration they performed themselves",
  anyone: "By any lab manager, including the one who performed it",
};

export const rateSourceLabels: Record<RateSource, string> = {
  calibrated: "The rate calibration in force (the set rate without one)",
  footage: "The rate measured from the footage, when the frames gave one",
};

export function timeZoneError(name: string) {
  return `"${name}" is not a time zone Tankside knows. Give an IANA name such as Europe/Berlin or America/New_York, or UTC; leave it empty to use the server's zone.`;
}

export const settingLimits: Record<SettingKey, { min: number; max: number; label: string; unit: string }> = {
  checkTolerancePct: { min: 0.1, max: 50, label: "Verdict tolerance", unit: "% of f predicted" },
  spinUpTimesToWait: { min: 0, max: 20, label: "Spin-up times to wait before filming", unit: "τ" },
  rateCalibrationIntervalDays: { min: 1, max: 3650, label: "Rate calibration interval", unit: "days" },
  scaleCalibrationIntervalDays: { min: 1, max: 3650, label: "Scale calibration interval", unit: "days" },
  timingCheckIntervalDays: { min: 1, max: 3650, label: "Timing check interval", unit: "days" },
  calibrationReminderDays: { min: 0, max: 365, label: "Reminder before a calibration is due", unit: "days" },
  // At most the absolute lifetime: a longer idle timeout could never be reached.
  sessionIdleHours: { min: 0.25, max: SESSION_ABSOLUTE_HOURS, label: "Sign out after inactivity", unit: "hours" },
};
