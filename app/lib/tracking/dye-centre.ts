/**
 * The centre of a dye patch from the whole patch, against the stack's still background.
 *
 * A dye patch is faint, wide and elongated: thresholding its colour keeps a ragged core whose
 * outline moves with the noise, and weighting by saturation (a ratio of channels) is noisy and
 * not proportional to the amount of dye. Here every pixel's difference from the background is
 * used instead, over the background's level there (dye-signal.ts), projected on the patch's own
 * direction: its change of colour, which glare, and on a grey bottom grid lines and shadows, do
 * not touch, plus its change of brightness weighted down by how badly the background explains
 * the brightness in a ring around the patch (dye-aim.ts; the matched filter for noise of unequal parts: on a
 * plain view a dark dye's darkening counts in full, under glare or over lines the background does
 * not hold only its colour does). A dark or a bright dye of any hue gives a positive signal. The
 * weight is that signal above the water's level, clipped at zero.
 *
 * A first pass over the blob's box, on pixels no other blob holds and with the weights above half
 * the box's highest signal (so a weaker patch beside it, such as its shadow, stays out), gives a
 * first centre and shape. Then the weights are multiplied by a Gaussian of the patch's own shape (its second moments: size, elongation and direction, which change slowly
 * from frame to frame) centred on the current centre, the centre moved to their centroid, and
 * the shape measured again, until the centre stops moving. For a Gaussian patch this fixed point
 * is the least-squares centre (the same equation), which keeps the error near the lowest a
 * centre estimate can reach at that contrast; with a window of the shape's size the clipped
 * noise sits symmetrically about the centre and does not pull it. The Gaussian weight halves the
 * measured moments, so the next window takes twice them; that converges to the patch's own.
 *
 * The signal per pixel is dye-patch-signal.ts's: the difference is over the bottom's level, not
 * over a still glare's the background also holds (dye-bottom.ts), and a pixel's brightness part
 * counts only within the ring's noise of what its colour part says. A clipped pixel (glare at 255)
 * tells nothing: in the window it takes the signal of its mirror image through the centre, so the
 * pair pulls neither way, and the step is taken over the weight of the other pixels. The patch's
 * coloured shadows beside it, weaker copies of it (dye-shadow.ts), are taken out of the signal and
 * the window settles again.
 */
import { createDyeAim } from "./dye-aim";
import { createPatchSignal } from "./dye-patch-signal";
import { findShadowCopies, withoutShadows } from "./dye-shadow";
import type { DyeLight } from "./types";

/** Threshold below which the signal gets no weight, in noise widths. */
const thresholdSigmas = 2;
/** Half-size of the window in the patch's standard deviations. */
const windowSigmas = 3.5;
/**
 * The first pass weighs the signal above half the box's highest (a weaker patch beside this one,
 * such as its shadow, stays out of it); for a Gaussian patch those moments are 0.217 of its own.
 */
const firstShare = 0.5;
const firstGrowth = 1 / 0.217;
/** Largest variance of the window along an axis, px² (a 100 px standard deviation). */
const maxVariance = 1e4;
/** Each pass moves the centre about halfway to the patch's; a window with clipped pixels, by less. */
const maxIterations = 12;
const maxClippedIterations = 40;
/** The window stops when it moves less than this, px. */
const settledPx = 2e-3;
/** Smallest variance of the window along any direction, px². */
const minVariance = 0.5;
/** The shadow's copies are looked for again round the centre and shape found without them, this many times in all. */
const shadowRounds = 2;

export interface DyeImage {
  /** Interleaved RGB, row-major. */
  data: Uint8Array;
  width: number;
  height: number;
}

/** Where to start: the thresholded blob's box (crop px, half-open). */
export interface PatchBox {
  col0: number;
  row0: number;
  col1: number;
  row1: number;
}

export interface PatchCentre {
  /** Crop px. */
  x: number;
  y: number;
  /** Highest signal in the window, grey levels along the dye's colour (the change times the background's level). */
  peak: number;
  /** The dye's direction of change (unit, its components summing to zero): its hue against the background. */
  colour: [number, number, number];
  /** The patch's second moments, px². */
  spread: { xx: number; xy: number; yy: number };
}

/**
 * A reusable measurer for frames of one size. `spans` holds, per row, the half-open column range
 * searched (inside the tank edge).
 */
export function createDyeCentre(width: number, height: number, spans: Int32Array, light: DyeLight = "encoded") {
  const signal = createPatchSignal(width, height, spans, light);
  const aim = createDyeAim(width, height, spans, signal);

  /**
   * `bottomFrom`: the stack's still background when `background` is composed for this frame with a
   * turning model (the bottom's level is fitted to it once, dye-patch-signal.ts).
   */
  return function measure(
    image: DyeImage,
    background: Uint8Array,
    box: PatchBox,
    free?: (col: number, row: number) => boolean,
    bottomFrom?: Uint8Array,
  ): PatchCentre | null {
    const img = image.data;
    const bg = background;
    const col0 = Math.max(0, box.col0);
    const row0 = Math.max(0, box.row0);
    const col1 = Math.min(width, box.col1);
    const row1 = Math.min(height, box.row1);
    if (col1 <= col0 || row1 <= row0) return null;
    signal.useFrame(img, bg, bottomFrom);

    // Which way the dye changes a pixel, and how much its brightness part counts (dye-aim.ts).
    const hue = aim(col0, row0, col1, row1);
    if (!hue) return null;

    // Offset and noise of the signal over the searched region (the patch is a small part of it).
    const stats = signal.spread();
    const floor = stats.median + thresholdSigmas * stats.sigma;

    // First pass: the signal over the box above half its highest gives a first centre and shape.
    let top = 0;
    for (let row = row0; row < row1; row++) {
      const a = Math.max(col0, spans[2 * row]!);
      const b = Math.min(col1, spans[2 * row + 1]!);
      for (let col = a; col < b; col++) if (!free || free(col, row)) top = Math.max(top, signal.once(row * width + col));
    }
    const firstFloor = Math.max(floor, firstShare * top);
    const offset = stats.median;
    let x = (col0 + col1 - 1) / 2;
    let y = (row0 + row1 - 1) / 2;
    let shape: [number, number, number] | null = null;
    let reachX = (col1 - col0) / 2;
    let reachY = (row1 - row0) / 2;
    let peak = 0;
    let clippedSeen = false;
    /**
     * Once a shadow's copies are found, the signal with them taken out, on the scale of
     * `signal.once` (the offset put back): what the window and a clipped pixel's mirror image read.
     */
    let shadowFree: ((col: number, row: number) => number) | null = null;
    // Moves the window until it settles; false when it holds no weight.
    const settle = (): boolean => {
      for (let iteration = 0; iteration < (clippedSeen ? maxClippedIterations : maxIterations); iteration++) {
        const r0 = Math.max(0, Math.floor(y - reachY));
        const r1 = Math.min(height - 1, Math.ceil(y + reachY));
        const c0 = Math.max(0, Math.floor(x - reachX));
        const c1 = Math.min(width - 1, Math.ceil(x + reachX));
        let inverse: [number, number, number] | null = null;
        if (shape) {
          const det = shape[0] * shape[2] - shape[1] * shape[1];
          inverse = [shape[2] / det, -shape[1] / det, shape[0] / det];
        }
        let w = 0;
        let wx = 0;
        /** The weight of clipped pixels standing in for their mirror image, and of that image. */
        let pairedWeight = 0;
        let wy = 0;
        let wxx = 0;
        let wxy = 0;
        let wyy = 0;
        peak = 0;
        for (let row = r0; row <= r1; row++) {
          let a = Math.max(c0, spans[2 * row]!);
          let b = Math.min(c1 + 1, spans[2 * row + 1]!);
          const dy = row - y;
          if (inverse) {
            // Only the columns of this row inside the window's ellipse (a pixel's margin each side:
            // the test below decides), rather than the whole box around a tilted patch.
            const half = inverse[1] * inverse[1] * dy * dy - inverse[0] * (inverse[2] * dy * dy - windowSigmas * windowSigmas);
            if (!(half >= 0)) continue;
            const root = Math.sqrt(half);
            a = Math.max(a, Math.floor(x + (-inverse[1] * dy - root) / inverse[0]) - 1);
            b = Math.min(b, Math.ceil(x + (-inverse[1] * dy + root) / inverse[0]) + 2);
          }
          // Along a row the window's Gaussian changes by a factor that itself changes by a fixed
          // one (exp(−i₀) a column), so two products a pixel stand for its exp.
          let gauss = 0;
          let ratio = 0;
          let ratioStep = 0;
          if (inverse) {
            const dx = a - x;
            gauss = Math.exp(-0.5 * (inverse[0] * dx * dx + 2 * inverse[1] * dx * dy + inverse[2] * dy * dy));
            ratio = Math.exp(-0.5 * (inverse[0] * (2 * dx + 1) + 2 * inverse[1] * dy));
            ratioStep = Math.exp(-inverse[0]);
          }
          for (let col = a; col < b; col++) {
            const dx = col - x;
            let weight: number;
            if (inverse) {
              const window = gauss;
              gauss *= ratio;
              ratio *= ratioStep;
              const q = inverse[0] * dx * dx + 2 * inverse[1] * dx * dy + inverse[2] * dy * dy;
              if (q > windowSigmas * windowSigmas) continue;
              // A clipped pixel tells nothing: it takes the signal of its mirror image through the
              // centre, as a symmetric patch would have there. The pair then pulls the centre neither
              // way (as if both were left out) while the patch's measured shape keeps its extent.
              // Where both are clipped the pixel is left out.
              let s: number;
              const stands = signal.clipped(col, row);
              if (stands) {
                // The image reads what its pixels read: with the shadow's copies taken out when they are.
                const mirrored = signal.mirrored(2 * x - col, 2 * y - row, shadowFree ?? undefined);
                if (mirrored === null) continue;
                s = mirrored;
              } else {
                s = shadowFree ? shadowFree(col, row) : signal.once(row * width + col);
                if (s > peak) peak = s;
              }
              weight = Math.max(0, s - offset) * window;
              if (stands) pairedWeight += 2 * weight;
            } else {
              if ((free && !free(col, row)) || signal.clipped(col, row)) continue;
              const s = signal.once(row * width + col);
              if (s > peak) peak = s;
              weight = s - firstFloor;
              if (weight <= 0) continue;
            }
            w += weight;
            wx += weight * dx;
            wy += weight * dy;
            wxx += weight * dx * dx;
            wxy += weight * dx * dy;
            wyy += weight * dy * dy;
          }
        }
        if (!(w > 0)) return false;
        const mx = wx / w;
        const my = wy / w;
        // A clipped pixel and its mirror image pull the centre neither way: the step is the pull of
        // the other pixels, over their weight alone (else it would shrink with the clipped share and
        // the window would settle short of the centre).
        const stepGain = w - pairedWeight > 0.05 * w ? w / (w - pairedWeight) : 1;
        x += mx * stepGain;
        y += my * stepGain;
        // Moments about the new centre; a Gaussian weight of the patch's own shape halves them.
        const grow: number = shape ? 2 : firstGrowth;
        let sxx = Math.max(minVariance, grow * (wxx / w - mx * mx));
        let syy = Math.max(minVariance, grow * (wyy / w - my * my));
        let sxy: number = grow * (wxy / w - mx * my);
        const limit = sxx * syy - minVariance * minVariance;
        if (sxy * sxy > limit) sxy = Math.sign(sxy) * Math.sqrt(Math.max(0, limit));
        if (!(sxx > 0 && syy > 0)) return false;
        sxx = Math.min(sxx, maxVariance);
        syy = Math.min(syy, maxVariance);
        shape = [sxx, sxy, syy];
        reachX = windowSigmas * Math.sqrt(sxx) + 1;
        reachY = windowSigmas * Math.sqrt(syy) + 1;
        if (pairedWeight > 0) clippedSeen = true;
        if (iteration > 1 && Math.hypot(mx, my) < settledPx) break;
      }
      return shape !== null;
    };
    if (!settle() || !shape) return null;
    // The patch's coloured shadow beside it, a weaker copy (dye-shadow.ts): taken out, the window settles again.
    const patchSignal = (p: number) => {
      const col = p % width;
      const row = (p - col) / width;
      return signal.clipped(col, row) ? 0 : signal.once(p) - offset;
    };
    for (let round = 0; round < shadowRounds; round++) {
      const search = { width, height, spans, value: patchSignal, x, y, shape, noise: stats.sigma };
      const copies = findShadowCopies(search);
      if (copies.length === 0) break;
      const without = withoutShadows(copies, search);
      shadowFree = (col, row) => offset + without(col, row);
      if (!settle() || !shape) return null;
    }
    if (!shape) return null;
    // The background's brightness at the box's centre turns the relative change into grey levels.
    const middle = 3 * (((row0 + row1) >> 1) * width + ((col0 + col1) >> 1));
    const level = (bg[middle]! + bg[middle + 1]! + bg[middle + 2]!) / 3;
    return {
      x,
      y,
      peak: peak * level,
      colour: [hue[0]!, hue[1]!, hue[2]!],
      spread: { xx: shape[0], xy: shape[1], yy: shape[2] },
    };
  };
}
