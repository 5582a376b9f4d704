/**
 * A dye's difference from the background in linear light, for dye-patch-signal.ts.
 *
 * A camera (and the ray tracer that stands for one) writes its pixels through the sRGB curve
 * (IEC 61966-2-1:1999): light that adds in the scene does not add in 8-bit values. Per pixel and
 * channel c, in linear light, a frame holds L_c = F_c·t_c + G: the bottom free of glare F, seen
 * through the dye's transmission t, and white light G from the water's surface (glare), which lies
 * above the dye and is not changed by it. Against the background, r_c = L_c − L_bg,c =
 * −a·F_c·k_c + g, with a the dye's amount, k its direction and g the white light the frame has and
 * the background lacks (or the reverse). Over F's level the difference is −a·k_c·F_c/F̄ + g/F̄: g
 * adds the same to every channel, so the difference's change of colour (the part summing to zero
 * over the channels, dye-aim.ts) holds a alone, and dividing by F̄ rather than by the background
 * (F + the glare it holds) keeps a dye over a glare-lit dark line at its true amount. The least-
 * squares fit of (a, g) to three channels is that zero-sum projection when F is grey.
 *
 * F̄ is the background's level in linear light less the white glare the stack's still model holds
 * above the bottom's fitted level (dye-bottom.ts): under a co-rotating camera the still model is
 * the background, a median over frames in which the lab-fixed glare moves; under a lab-fixed one
 * the background is composed per frame (the turning grid, turning-compose.ts) on the still model,
 * whose glare stays in it and is taken out here.
 */

/** Linear light on the 0–255 scale of a (possibly fractional) sRGB level (IEC 61966-2-1:1999, its two pieces). */
export function linearOfLevel(level: number): number {
  const s = Math.min(1, Math.max(0, level / 255));
  return 255 * (s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4);
}

/** 8-bit sRGB value → linear light on the same 0–255 scale, as a table. */
export const linearOf: Float64Array = Float64Array.from({ length: 256 }, (_, v) => linearOfLevel(v));

/** The channels' mean in linear light. */
export function linearLevel(b0: number, b1: number, b2: number): number {
  return (linearOf[b0]! + linearOf[b1]! + linearOf[b2]!) / 3;
}

/**
 * The white glare a still model holds at a pixel, in linear light: its level above `cap` (the
 * bottom's fitted level plus its noise margin, in sRGB levels), none below.
 */
export function stillGlare(s0: number, s1: number, s2: number, cap: number): number {
  if (!Number.isFinite(cap)) return 0;
  const over = linearLevel(s0, s1, s2) - linearOfLevel(cap);
  return over > 0 ? over : 0;
}

/**
 * The smallest glare-free level a difference is divided by, as a share of the pixel's background
 * level in linear light: where the still glare is nearly all of the background, what remains is
 * mostly noise and the division would blow it up.
 */
const smallestFreeShare = 0.15;

/** 1 over the glare-free level of the bottom at a pixel whose background is (b0, b1, b2) and still glare `glare`. */
export function inverseFreeLevel(b0: number, b1: number, b2: number, glare: number): number {
  const level = linearLevel(b0, b1, b2);
  const free = Math.max(level - glare, smallestFreeShare * level, 1);
  return 1 / free;
}

/** The difference per channel in linear light times `scale` (1 over the glare-free level), into `out`. */
export function linearDifference(i0: number, i1: number, i2: number, b0: number, b1: number, b2: number, out: Float64Array, scale: number): void {
  out[0] = (linearOf[i0]! - linearOf[b0]!) * scale;
  out[1] = (linearOf[i1]! - linearOf[b1]!) * scale;
  out[2] = (linearOf[i2]! - linearOf[b2]!) * scale;
}
