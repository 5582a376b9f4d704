/**
 * The centre of a dye patch from the whole patch, against the stack's still background.
 *
 * A dye patch is faint, wide and elongated: thresholding its colour keeps a ragged core whose
 * outline moves with the noise, and weighting by saturation (a ratio of channels) is noisy and
 * not proportional to the amount of dye. Here every pixel's difference from the background is
 * used instead, per channel divided by the background's own level there (so the light falling on
 * that part of the tank cancels: an uneven light would otherwise pull the centre towards the
 * brighter side), and projected on the dye's colour direction, estimated from the patch itself
 * (so a dark or a bright dye of any hue gives a positive signal, and the channels add up the way
 * that keeps most signal over the noise). The weight is that signal above the water's level,
 * clipped at zero.
 *
 * A first pass over the colour blob's box, with the weights above a threshold of two noise
 * widths, gives a first centre and shape. Then the weights are multiplied by a Gaussian of the
 * patch's own shape (its second moments: size, elongation and direction, which change slowly
 * from frame to frame) centred on the current centre, the centre moved to their centroid, and
 * the shape measured again, until the centre stops moving. For a Gaussian patch this fixed point
 * is the least-squares centre (the same equation), which keeps the error near the lowest a
 * centre estimate can reach at that contrast; with a window of the shape's size the clipped
 * noise sits symmetrically about the centre and does not pull it. The Gaussian weight halves the
 * measured moments, so the next window takes twice them; that converges to the patch's own.
 */
import { robustStats } from "./robust-stats";

/** Threshold below which the signal gets no weight, in noise widths. */
const thresholdSigmas = 2;
/** Half-size of the window in the patch's standard deviations. */
const windowSigmas = 3.5;
/** The first pass's thresholded moments fall short of the patch's own; this much is made up. */
const firstGrowth = 1.5;
/** Largest variance of the window along an axis, px² (a 100 px standard deviation). */
const maxVariance = 1e4;
const maxIterations = 12;
/** The window stops when it moves less than this, px. */
const settledPx = 2e-3;
/** Smallest variance of the window along any direction, px². */
const minVariance = 0.5;
/** Every 8th pixel of every 8th row: some 7000 samples in a 670 px tank, plenty for a median and MAD. */
const noiseStride = 8;
/** Histogram bins per grey level of signal, and its half-range in grey levels. */
const binsPerLevel = 4;
const halfRange = 512;

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
  /** Highest signal in the window, grey levels along the dye's colour. */
  peak: number;
  /** The patch's second moments, px². */
  spread: { xx: number; xy: number; yy: number };
}

/**
 * A reusable measurer for frames of one size. `spans` holds, per row, the half-open column range
 * searched (inside the tank edge).
 */
export function createDyeCentre(width: number, height: number, spans: Int32Array) {
  const hist = new Uint32Array(2 * halfRange * binsPerLevel + 1);
  const factor = new Float64Array(3);
  // The window's passes visit mostly the same pixels, and a pixel's signal is fixed for the
  // frame: each is worked out once per frame (`stamp` says for which measurement).
  const signals = new Float64Array(width * height);
  const stamp = new Uint32Array(width * height);
  let measurement = 0;

  /** The per-channel factors of the signal at one pixel: direction × level / local background. */
  function signalAt(img: Uint8Array, bg: Uint8Array, p: number): number {
    const q = 3 * p;
    const b0 = bg[q]!;
    const b1 = bg[q + 1]!;
    const b2 = bg[q + 2]!;
    return (
      (factor[0]! * (img[q]! - b0)) / (b0 > 0 ? b0 : 1) +
      (factor[1]! * (img[q + 1]! - b1)) / (b1 > 0 ? b1 : 1) +
      (factor[2]! * (img[q + 2]! - b2)) / (b2 > 0 ? b2 : 1)
    );
  }

  /** signalAt, once per pixel per measurement. */
  function signalOnce(img: Uint8Array, bg: Uint8Array, p: number): number {
    if (stamp[p] === measurement) return signals[p]!;
    const s = signalAt(img, bg, p);
    signals[p] = s;
    stamp[p] = measurement;
    return s;
  }

  return function measure(image: DyeImage, background: Uint8Array, box: PatchBox): PatchCentre | null {
    const img = image.data;
    const bg = background;
    const col0 = Math.max(0, box.col0);
    const row0 = Math.max(0, box.row0);
    const col1 = Math.min(width, box.col1);
    const row1 = Math.min(height, box.row1);
    if (col1 <= col0 || row1 <= row0) return null;

    // The light level at the box's centre turns relative differences back into grey levels.
    const middle = 3 * (((row0 + row1) >> 1) * width + ((col0 + col1) >> 1));
    const level = [Math.max(1, bg[middle]!), Math.max(1, bg[middle + 1]!), Math.max(1, bg[middle + 2]!)];
    // The dye's colour direction: the summed relative difference over the blob's box.
    const sum = [0, 0, 0];
    for (let row = row0; row < row1; row++) {
      const a = Math.max(col0, spans[2 * row]!);
      const b = Math.min(col1, spans[2 * row + 1]!);
      for (let col = a; col < b; col++) {
        const q = 3 * (row * width + col);
        for (let c = 0; c < 3; c++) sum[c]! += ((img[q + c]! - bg[q + c]!) * level[c]!) / Math.max(1, bg[q + c]!);
      }
    }
    const norm = Math.hypot(sum[0]!, sum[1]!, sum[2]!);
    if (!(norm > 0)) return null;
    for (let c = 0; c < 3; c++) factor[c] = (sum[c]! / norm) * level[c]!;
    // A new colour direction: signals worked out before belong to another measurement.
    measurement = measurement === 0xffffffff ? 1 : measurement + 1;
    if (measurement === 1) stamp.fill(0);

    // Offset and noise of the signal over the searched region (the patch is a small part of it).
    hist.fill(0);
    for (let row = 0; row < height; row += noiseStride) {
      const a = spans[2 * row]!;
      const b = spans[2 * row + 1]!;
      for (let col = a; col < b; col += noiseStride) {
        const s = signalAt(img, bg, row * width + col);
        const bin = Math.round((Math.max(-halfRange, Math.min(halfRange, s)) + halfRange) * binsPerLevel);
        hist[bin]!++;
      }
    }
    const stats = robustStats(hist, halfRange * binsPerLevel);
    const floor = (stats.median + thresholdSigmas * stats.sigma) / binsPerLevel;

    // First pass: the thresholded signal over the box gives a first centre and shape.
    const offset = stats.median / binsPerLevel;
    let x = (col0 + col1 - 1) / 2;
    let y = (row0 + row1 - 1) / 2;
    let shape: [number, number, number] | null = null;
    let reachX = (col1 - col0) / 2;
    let reachY = (row1 - row0) / 2;
    let peak = 0;
    for (let iteration = 0; iteration < maxIterations; iteration++) {
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
        for (let col = a; col < b; col++) {
          const dx = col - x;
          let weight: number;
          if (inverse) {
            const q = inverse[0] * dx * dx + 2 * inverse[1] * dx * dy + inverse[2] * dy * dy;
            if (q > windowSigmas * windowSigmas) continue;
            const s = signalOnce(img, bg, row * width + col);
            if (s > peak) peak = s;
            weight = Math.max(0, s - offset) * Math.exp(-0.5 * q);
          } else {
            const s = signalOnce(img, bg, row * width + col);
            if (s > peak) peak = s;
            weight = s - floor;
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
      if (!(w > 0)) return null;
      const mx = wx / w;
      const my = wy / w;
      x += mx;
      y += my;
      // Moments about the new centre; a Gaussian weight of the patch's own shape halves them.
      const grow: number = shape ? 2 : firstGrowth;
      let sxx = Math.max(minVariance, grow * (wxx / w - mx * mx));
      let syy = Math.max(minVariance, grow * (wyy / w - my * my));
      let sxy: number = grow * (wxy / w - mx * my);
      const limit = sxx * syy - minVariance * minVariance;
      if (sxy * sxy > limit) sxy = Math.sign(sxy) * Math.sqrt(Math.max(0, limit));
      if (!(sxx > 0 && syy > 0)) return null;
      sxx = Math.min(sxx, maxVariance);
      syy = Math.min(syy, maxVariance);
      shape = [sxx, sxy, syy];
      reachX = windowSigmas * Math.sqrt(sxx) + 1;
      reachY = windowSigmas * Math.sqrt(syy) + 1;
      if (iteration > 1 && Math.hypot(mx, my) < settledPx) break;
    }
    if (!shape) return null;
    return { x, y, peak, spread: { xx: shape[0], xy: shape[1], yy: shape[2] } };
  };
}
