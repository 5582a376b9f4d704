/** Angles in radians: the one unwrapping of a sampled direction, and the principal value of a difference. */

/**
 * Angles unwrapped so successive values never jump by more than π: each step of more than π
 * between raw samples is taken as a wrap through ±π and undone by a whole turn. Right when the
 * direction turns by less than half a turn between samples.
 */
export function unwrapAngles(angles: readonly number[]): number[] {
  const out: number[] = [];
  let offset = 0;
  let previous: number | undefined;
  for (const angle of angles) {
    if (previous !== undefined) {
      const d = angle - previous;
      if (d > Math.PI) offset -= 2 * Math.PI;
      else if (d < -Math.PI) offset += 2 * Math.PI;
    }
    previous = angle;
    out.push(angle + offset);
  }
  return out;
}

/** The same direction as `angle`, in (−π, π]: for the turn between two directions. */
export function wrapAngle(angle: number): number {
  return Math.atan2(Math.sin(angle), Math.cos(angle));
}
