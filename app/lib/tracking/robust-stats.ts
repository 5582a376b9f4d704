/**
 * Robust location and spread of a sample held as a histogram of whole values, worked out in
 * place: cheaper than sorting the values of every pixel of every frame (Decision 46).
 */
const minSigma = 0.5;

/**
 * A frame's noise is sampled on every `noiseRowStride`-th row at every `noiseColumnStride`-th
 * pixel: some 5500 samples in a 670 px tank, plenty for a median and MAD. Read along rows,
 * neighbouring samples share the memory's cache lines (every 8th pixel of every 8th row took a
 * cache miss each); strides prime to 8 meet every position in JPEG's 8 × 8 blocks, whose noise
 * differs by position (every 4th or 8th pixel of every 4th or 8th row meets only a few of them).
 */
export const noiseRowStride = 13;
export const noiseColumnStride = 5;

/** Median and MAD-based sigma of a histogram whose bin i holds the value i − shift. */
export function robustStats(hist: Uint32Array, shift: number): { median: number; sigma: number } {
  let total = 0;
  for (let i = 0; i < hist.length; i++) total += hist[i]!;
  if (total === 0) return { median: 0, sigma: minSigma };
  const half = total / 2;
  let acc = 0;
  let medianBin = 0;
  for (let i = 0; i < hist.length; i++) {
    acc += hist[i]!;
    if (acc >= half) {
      medianBin = i;
      break;
    }
  }
  // The MAD from the same histogram: widen a window about the median until it holds half the
  // samples, taking each integer value as spread over ±0.5 so the estimate is not whole levels.
  let inside = hist[medianBin]!;
  let previous = 0;
  let radius = 0;
  while (inside < half && radius < hist.length) {
    radius++;
    previous = inside;
    if (medianBin - radius >= 0) inside += hist[medianBin - radius]!;
    if (medianBin + radius < hist.length) inside += hist[medianBin + radius]!;
  }
  const mad = radius === 0 ? (0.5 * half) / inside : radius - 0.5 + (half - previous) / Math.max(1, inside - previous);
  return { median: medianBin - shift, sigma: Math.max(minSigma, 1.4826 * mad) };
}
