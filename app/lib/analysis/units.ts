/**
 * Units and constants of the rotating frame. Angular rates are signed: positive is
 * counterclockwise seen from above (the northern-hemisphere analogue).
 */

/** Standard acceleration of gravity, m/s², exact by definition (3rd CGPM 1901; NIST SP 330). */
export const STANDARD_GRAVITY = 9.80665;

/** Earth's nominal mean angular velocity, rad/s (GRS80/WGS84 value, IERS Conventions 2010, TN 36). */
export const EARTH_ROTATION_RATE = 7.292115e-5;

/** One revolution per solar day: the usual rough value; the sidereal rate above is the right one. */
export const ONE_TURN_PER_DAY = (2 * Math.PI) / 86400;

/** Direction of a table's rotation seen from above. */
export type RotationSense = "ccw" | "cw";

export function rpmToRadPerS(rpm: number): number {
  return (2 * Math.PI * rpm) / 60;
}

export function radPerSToRpm(omega: number): number {
  return (60 * omega) / (2 * Math.PI);
}

export function degreesToRadians(deg: number): number {
  return (deg * Math.PI) / 180;
}

/** Coriolis parameter f = 2Ω sin φ at latitude φ (degrees, north positive). */
export function coriolisParameter(latitudeDeg: number, omega: number = EARTH_ROTATION_RATE): number {
  return 2 * omega * Math.sin(degreesToRadians(latitudeDeg));
}

/** Coriolis parameter of a turntable, whose axis is vertical: f = 2Ω. */
export function tableCoriolisParameter(omega: number): number {
  return 2 * omega;
}

export interface LocalVelocity {
  /** eastward, m/s */
  east: number;
  /** northward, m/s */
  north: number;
  /** upward, m/s */
  up: number;
}

/**
 * Coriolis acceleration −2Ω×v in local east, north, up axes at latitude φ, where
 * Ω = |Ω|(0, cos φ, sin φ): a = 2|Ω|(v sin φ − w cos φ, −u sin φ, u cos φ).
 */
export function coriolisAcceleration(velocity: LocalVelocity, latitudeDeg: number, omega: number = EARTH_ROTATION_RATE): LocalVelocity {
  const phi = degreesToRadians(latitudeDeg);
  const s = Math.sin(phi);
  const c = Math.cos(phi);
  const { east: u, north: v, up: w } = velocity;
  return {
    east: 2 * omega * (v * s - w * c),
    north: -2 * omega * u * s,
    up: 2 * omega * u * c,
  };
}
