/**
 * The still scene behind a moving float: the per-pixel median of frames spread over the stack.
 * Rim, glare, illumination and tank marks that do not move are in it; a float that keeps moving
 * is not, provided it spends less than half the sampled frames on any one pixel.
 */

export const defaultBackgroundSamples = 21;

/** Frame indices spread evenly over the stack, first and last included, odd count where possible. */
export function backgroundSampleIndices(frameCount: number, maxSamples = defaultBackgroundSamples): number[] {
  if (frameCount <= 0) return [];
  let count = Math.min(frameCount, maxSamples);
  if (count % 2 === 0 && count > 1) count -= 1;
  if (count === 1) return [0];
  const indices = new Set<number>();
  for (let i = 0; i < count; i++) indices.add(Math.round((i * (frameCount - 1)) / (count - 1)));
  return [...indices].sort((a, b) => a - b);
}

/** Per-pixel median of equally sized single-channel frames. */
export function medianBackground(frames: readonly Uint8Array[]): Uint8Array {
  if (frames.length === 0) throw new Error("A background needs at least one frame.");
  const out = new Uint8Array(frames[0].length);
  medianInto(frames, out, 0, out.length);
  return out;
}

/** The median for pixels [from, to) only, so several workers can share one background. */
export function medianInto(frames: readonly Uint8Array[], out: Uint8Array, from: number, to: number): void {
  const length = out.length;
  for (const frame of frames) {
    if (frame.length !== length) throw new Error("Background frames differ in size.");
  }
  const n = frames.length;
  const middle = n >> 1;
  const values = new Uint8Array(n);
  for (let p = from; p < to; p++) {
    // Insertion sort: n is at most a few dozen and mostly the values are nearly equal.
    for (let j = 0; j < n; j++) {
      const v = frames[j][p];
      let k = j - 1;
      while (k >= 0 && values[k] > v) {
        values[k + 1] = values[k];
        k--;
      }
      values[k + 1] = v;
    }
    out[p] = values[middle];
  }
}
