/**
 * A dye's signal at one pixel against the stack's colour background: two readings of the same
 * difference, for two jobs.
 *
 * *Finding and comparing patches* (relativeChangeSquared): each channel's ratio to the background,
 * r_c = I_c / B_c, over their mean, less 1: the colour's departure from the background's. Whatever
 * multiplies all channels alike leaves it at zero, on any bottom: a grid line, a mark or a shadow
 * the background does not hold (under a lab-fixed camera the grid turns through a still
 * background), and the light falling unevenly on the tank. A dye seen through (I = B·T) gives
 * T_c / mean(T) − 1, which grows as the dye darkens what lies behind it, while the dye's coloured
 * shadow on the bottom, lit by only part of the lamps (I = B·(1 − f + f·T)), gives less: that is
 * how a patch is told from its shadow (detect.ts). White glare on top of the dye weakens it.
 *
 * *Centring a patch* (levelDifference): the difference itself per channel, over
 * the background's mean level, projected on the patch's own direction (dye-centre.ts). Its part
 * that sums to zero over the channels, the change of colour, is untouched by white glare
 * (I = B + g adds the same g to every channel, on top of the dye too) and, on a grey bottom, by
 * lines and shadows; it is about proportional to the amount of dye while the dye is faint. Its
 * brightness part is not, and counts only as far as the background explains the brightness
 * around the patch.
 */

/** The background's mean level, at most `cap` and at least 1. */
function levelOf(b0: number, b1: number, b2: number, cap = Infinity): number {
  const level = Math.min(cap, (b0 + b1 + b2) / 3);
  return level > 1 ? level : 1;
}

/**
 * |r / mean(r) − 1|² with r_c = I_c / B_c (a black background channel taken as 1); 0 for a pixel
 * black in every channel.
 */
export function relativeChangeSquared(i0: number, i1: number, i2: number, b0: number, b1: number, b2: number): number {
  const r0 = i0 / (b0 > 1 ? b0 : 1);
  const r1 = i1 / (b1 > 1 ? b1 : 1);
  const r2 = i2 / (b2 > 1 ? b2 : 1);
  const sum = r0 + r1 + r2;
  if (!(sum > 0)) return 0;
  const scale = 3 / sum;
  const s0 = r0 * scale - 1;
  const s1 = r1 * scale - 1;
  const s2 = r2 * scale - 1;
  return s0 * s0 + s1 * s1 + s2 * s2;
}

/**
 * 1 over the background's mean level, the level taken as at most `cap`: white light the background
 * holds on top of the bottom (a still glare on the water) does not pass through the dye, and is no
 * part of what it darkens (dye-bottom.ts). dye-centre.ts makes it once per background.
 */
export function inverseLevel(b0: number, b1: number, b2: number, cap = Infinity): number {
  return 1 / levelOf(b0, b1, b2, cap);
}

/**
 * The pixel's difference from the background per channel over the background's mean level, into
 * `out`; `scale` is 1 over that level, when made beforehand (dye-patch-signal.ts makes it once per
 * background, capped at the bottom's level).
 */
export function levelDifference(
  i0: number,
  i1: number,
  i2: number,
  b0: number,
  b1: number,
  b2: number,
  out: Float64Array,
  scale = 1 / levelOf(b0, b1, b2),
): void {
  out[0] = (i0 - b0) * scale;
  out[1] = (i1 - b1) * scale;
  out[2] = (i2 - b2) * scale;
}

/**
 * Whether relativeChangeSquared exceeds `level²`, without a division: with P_c the product of the
 * other two channels' background, r_c ∝ I_c·P_c, and |r / mean(r) − 1|² = 9·Σr_c² / (Σr_c)² − 3.
 * For the threshold's pass over every searched pixel.
 */
export function relativeChangeAbove(i0: number, i1: number, i2: number, b0: number, b1: number, b2: number, level: number): boolean {
  const c0 = b0 > 1 ? b0 : 1;
  const c1 = b1 > 1 ? b1 : 1;
  const c2 = b2 > 1 ? b2 : 1;
  const r0 = i0 * c1 * c2;
  const r1 = i1 * c0 * c2;
  const r2 = i2 * c0 * c1;
  const sum = r0 + r1 + r2;
  if (!(sum > 0)) return false;
  return 9 * (r0 * r0 + r1 * r1 + r2 * r2) > (level * level + 3) * sum * sum;
}

/**
 * The products P_c of relativeChangeAbove for the pixels [from, to) of a background (all of them
 * by default; a black channel taken as 1), into the same places of `out` (3 per pixel): they stay
 * as they are for the background's frames, so the threshold makes them once per background array,
 * for the parts it searches (dye-marks.ts). Each is at most 255² = 65 025, so 16 bits hold it
 * exactly, a quarter of the memory a search streams through of 64-bit floats.
 */
export function backgroundProducts(background: Uint8Array, out: Uint16Array, from = 0, to = background.length / 3): void {
  for (let q = 3 * from, end = 3 * to; q < end; q += 3) {
    const c0 = background[q]! > 1 ? background[q]! : 1;
    const c1 = background[q + 1]! > 1 ? background[q + 1]! : 1;
    const c2 = background[q + 2]! > 1 ? background[q + 2]! : 1;
    out[q] = c1 * c2;
    out[q + 1] = c0 * c2;
    out[q + 2] = c0 * c1;
  }
}

/**
 * Marks (255 in `mask`) the pixels [from, to) whose relativeChangeSquared against the background
 * exceeds `level²`, the background given as its products (backgroundProducts); returns how many.
 * Decides exactly as relativeChangeAbove (the same whole numbers, each below 2⁵³: I_c·P_c is
 * I_c·B_a·B_b in another order; a pixel black in every channel fails either way), with three
 * multiplications and three clamps a pixel fewer. A loop of its own, apart from the threshold's
 * pass, whose other branches slowed it when it was written inside it.
 */
export function markChangeAbove(img: Uint8Array, products: Uint16Array, mask: Uint8Array, from: number, to: number, level: number): number {
  const bound = level * level + 3;
  let marked = 0;
  for (let at = from, p = 3 * from; at < to; at++, p += 3) {
    const r0 = img[p]! * products[p]!;
    const r1 = img[p + 1]! * products[p + 1]!;
    const r2 = img[p + 2]! * products[p + 2]!;
    const sum = r0 + r1 + r2;
    if (!(9 * (r0 * r0 + r1 * r1 + r2 * r2) > bound * sum * sum)) continue;
    mask[at] = 255;
    marked++;
  }
  return marked;
}
