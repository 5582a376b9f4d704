import { rpmToRadPerS } from "./analysis/units";
import { spinUpTime } from "./conditions/run-conditions";

export const bookingStates = ["requested", "approved", "declined", "cancelled"] as const;
export type BookingState = (typeof bookingStates)[number];

export const bookingStateLabels: Record<BookingState, string> = {
  requested: "Requested",
  approved: "Approved",
  declined: "Declined",
  cancelled: "Cancelled",
};

/** Kinematic viscosity of water near room temperature (about 20 °C), m²/s; common practice for a planning figure. */
export const WATER_KINEMATIC_VISCOSITY_M2_S = 1.0e-6;

/**
 * Ekman spin-up time τ = H/√(νΩ) for water of depth H (free surface) on a table turning at Ω, through
 * the run-condition calculator. A booking has no water temperature yet, hence ν at about 20 °C.
 */
export function ekmanSpinUpTimeS(depthM: number, rateRpm: number, nuM2PerS = WATER_KINEMATIC_VISCOSITY_M2_S): number {
  if (!(depthM > 0) || !(rateRpm > 0) || !(nuM2PerS > 0)) throw new RangeError("depth, rate and viscosity must be more than zero");
  return spinUpTime(depthM, nuM2PerS, rpmToRadPerS(rateRpm));
}

/** The lead time before filming: the lab's number of spin-up times to wait, each τ long. */
export function spinUpLeadS(depthM: number, rateRpm: number, timesToWait: number): number {
  return timesToWait * ekmanSpinUpTimeS(depthM, rateRpm);
}

/** Half-open slots [start, end) overlap when each starts before the other ends. */
export function slotsOverlap(a: { start: Date; end: Date }, b: { start: Date; end: Date }) {
  return a.start.getTime() < b.end.getTime() && b.start.getTime() < a.end.getTime();
}

export const MAX_BOOKING_DAYS = 14;

export const tableBookingCaution =
  "Keep hands clear of the rim while the table turns and ramp the rate gently; the lab's own rules and the maker's instructions come first.";
