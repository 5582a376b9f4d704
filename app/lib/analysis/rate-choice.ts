/**
 * Which rate the theory check uses, and whether the rate read from the footage disagrees with the
 * rate otherwise in force (the rate calibration's, or the set rate). Pure: the server passes in
 * the run's rates and the lab's choice; the answer is stored with the check.
 */
import { formatNumber, formatWithError } from "../number-format";
import { Z95 } from "./decision";
import { radPerSToRpm } from "./units";

/** The lab's choice: the calibrated (or set) rate, or the rate measured from the footage when there is one. */
export type RateSource = "calibrated" | "footage";
export const RATE_SOURCES: readonly RateSource[] = ["calibrated", "footage"];
export const DEFAULT_RATE_SOURCE: RateSource = "calibrated";

export type RateUsed = "set rate" | "rate calibration" | "rate from the footage";

/**
 * Without a rate calibration, a measured rate is compared with the set rate within this share of
 * it beyond its own 95 % interval: the margin a lab's turntable controller holds (from memory, a
 * typical figure; a calibration replaces it).
 */
export const SET_RATE_TOLERANCE_PCT = 1;

export interface MeasuredRate {
  /** rad/s, signed */
  omega: number;
  stdError: number;
  method: string;
  nPoints: number;
}

export interface RateChoiceInput {
  /** rad/s, signed */
  omegaSet: number;
  omegaCalibrated?: { value: number; stdError: number; calibrationId?: number | string };
  measured: MeasuredRate | null;
  use: RateSource;
}

export interface RateChoice {
  used: RateUsed;
  /** The lab's setting at the time of the check. */
  setting: RateSource;
  /** rad/s, signed, and its standard error (0 for the set rate) */
  omega: number;
  stdError: number;
  /** Why this rate, in words. */
  why: string;
  measured: MeasuredRate | null;
  /** The footage disagrees with the rate otherwise in force, in words ("the table turned at 9.62 ± 0.02 rpm, not 10 rpm"); null when it does not or there is no measurement. */
  disagreement: string | null;
}

const rpm = (omega: number) => Math.abs(radPerSToRpm(omega));

/** The rate in rpm (unsigned, the sense is the run's) with its standard error, to the error's second digit. */
export function formatRpm(omega: number, stdError: number): string {
  return stdError > 0 ? `${formatWithError(rpm(omega), rpm(stdError))} rpm` : `${formatNumber(rpm(omega), 4)} rpm`;
}

export function chooseRate(input: RateChoiceInput): RateChoice {
  const { omegaSet, omegaCalibrated, use } = input;
  const measured = input.measured && Number.isFinite(input.measured.omega) && input.measured.stdError >= 0 ? input.measured : null;
  const reference = omegaCalibrated
    ? { used: "rate calibration" as const, omega: omegaCalibrated.value, stdError: omegaCalibrated.stdError }
    : { used: "set rate" as const, omega: omegaSet, stdError: 0 };

  let disagreement: string | null = null;
  if (measured && Number.isFinite(reference.omega)) {
    const difference = Math.abs(measured.omega - reference.omega);
    const limit = omegaCalibrated
      ? Z95 * Math.hypot(measured.stdError, reference.stdError)
      : Z95 * measured.stdError + (SET_RATE_TOLERANCE_PCT / 100) * Math.abs(omegaSet);
    if (difference > limit || Math.sign(measured.omega) !== Math.sign(reference.omega)) {
      const against = omegaCalibrated
        ? `${formatRpm(reference.omega, reference.stdError)} from the rate calibration (beyond their combined 95 % uncertainty)`
        : `the set ${formatRpm(reference.omega, 0)} (beyond its ${formatNumber(SET_RATE_TOLERANCE_PCT, 2)} % tolerance and the measurement's 95 % uncertainty)`;
      const sense = Math.sign(measured.omega) !== Math.sign(reference.omega) && measured.omega !== 0 ? ", and the other way round" : "";
      disagreement = `The table turned at ${formatRpm(measured.omega, measured.stdError)}${sense}, not ${against}, by the ${measured.method} in the frames.`;
    }
  }

  if (use === "footage" && measured) {
    return {
      used: "rate from the footage",
      setting: use,
      omega: measured.omega,
      stdError: measured.stdError,
      why: `The lab uses the rate measured from the footage when there is one: ${formatRpm(measured.omega, measured.stdError)} from the ${measured.method} in ${measured.nPoints} frames.`,
      measured,
      disagreement,
    };
  }
  const why =
    use === "footage"
      ? `The lab uses the rate measured from the footage, but none was read from these frames, so the ${reference.used} is used.`
      : `The lab uses the ${reference.used === "rate calibration" ? "rate calibration in force" : "set rate (no rate calibration is in force)"}${measured ? "; the rate measured from the footage is shown beside it" : ""}.`;
  return { used: reference.used, setting: use, omega: reference.omega, stdError: reference.stdError, why, measured, disagreement };
}
