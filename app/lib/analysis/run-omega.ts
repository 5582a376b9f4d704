/**
 * Ω from a run: the table's rate as the technician logs it (rpm, never negative) and its sense of
 * rotation seen from above, to the signed angular velocity the theory check, the exports, the
 * conditions panel, the seeding and the command line use. Counterclockwise is positive.
 */
import { rpmToRadPerS, type RotationSense } from "./units";

/**
 * Signed Ω, rad/s, from a rate in rpm and a direction. A negative or non-finite rpm is a
 * contradictory entry (the direction carries the sign), so it gives NaN, which every downstream
 * check treats as "no usable rate"; so does a direction that is neither "ccw" nor "cw".
 */
export function omegaFromTableRate(rpm: number, sense: RotationSense): number {
  if (!Number.isFinite(rpm) || rpm < 0) return Number.NaN;
  if (sense !== "ccw" && sense !== "cw") return Number.NaN;
  const omega = rpmToRadPerS(rpm);
  // A table at rest has no direction: plain zero, never −0 (which would print as "−0").
  if (omega === 0) return 0;
  return sense === "cw" ? -omega : omega;
}

/** The run's set Ω, rad/s, signed by its direction. */
export function runOmega(run: { setRateRpm: number; direction: RotationSense }): number {
  return omegaFromTableRate(run.setRateRpm, run.direction);
}
