/**
 * The still scene behind a moving float: the per-pixel median of frames spread over the stack,
 * with the float itself left out.
 *
 * A plain median keeps a trace of the float wherever it spent a few of the sampled frames: a
 * slow float on a short stack (a small inertial circle seen by a co-rotating camera) raises the
 * median along its own path by a good part of the noise. The difference image then has a hollow
 * there, the centroid is pulled off the float by an amount that changes slowly with its position,
 * and the theory check sees errors correlated from frame to frame that it cannot tell from
 * motion (on rendered 40-frame stacks: 0.13 px instead of 0.06 px, lag-1 autocorrelation 0.75,
 * f biased high by two standard errors). So the background is built twice: the float is found in
 * the sampled frames against the plain median, a disc around each find is left out of that
 * sample, and the median is taken again over what remains. Rim, glare, illumination and tank
 * marks that do not move stay in it; a float that sits on one pixel for more than half the
 * sampled frames is still taken for background there (and missed in those frames). A dye stack
 * gets the same treatment in colour (each channel's median), with the ellipse of each measured
 * patch left out instead of a disc.
 */
import { fillChannelsFromSurroundings, fillFromSurroundings, minimumFreeSamples } from "./background-fill";
import type { Detection } from "./types";

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

/**
 * A region of one sampled frame (index into the samples) left out of the median, crop px: a disc
 * of radius `r`, or, with `shape` (second moments, px²), the ellipse within `r` standard
 * deviations of the centre.
 */
export interface BackgroundExclusion {
  sample: number;
  x: number;
  y: number;
  r: number;
  shape?: { xx: number; xy: number; yy: number };
}

/** The frames' shared width, needed to place exclusion discs on pixel indices. */
export interface ExclusionSet {
  width: number;
  discs: readonly BackgroundExclusion[];
}

/** A measured dye patch is left out to 3.5 standard deviations, where it is below 0.3 % of its peak. */
export const patchExclusionSigmas = 3.5;

/**
 * Discs to leave out around the tracers found in each sampled frame. A float's Gaussian glow
 * reaches well past the thresholded blob: for a spot of peak contrast 150 over noise σ = 10, the
 * blob (5 σ) has radius 1.5 spot widths and the glow stays above σ to 2.3, so the disc is twice
 * the blob's equivalent radius, plus a detection block and 3 px for the centroid's own error.
 */
export function tracerExclusions(perSample: readonly (readonly Detection[])[], crop: { left: number; top: number }, shrink = 1): BackgroundExclusion[] {
  const discs: BackgroundExclusion[] = [];
  perSample.forEach((detections, sample) => {
    for (const d of detections) {
      const x = d.x - crop.left;
      const y = d.y - crop.top;
      if (d.spread) {
        // A measured patch: its ellipse, widened by a block and 2 px each way for its own error.
        const margin = (shrink + 2) ** 2;
        discs.push({ sample, x, y, r: patchExclusionSigmas, shape: { xx: d.spread.xx + margin, xy: d.spread.xy, yy: d.spread.yy + margin } });
        continue;
      }
      const radius = Math.sqrt(Math.max(0, d.area) / Math.PI);
      discs.push({ sample, x, y, r: 2 * radius + shrink + 3 });
    }
  });
  return discs;
}

/** Per-pixel median of equally sized single-channel frames. */
export function medianBackground(frames: readonly Uint8Array[], exclusions?: ExclusionSet): Uint8Array {
  if (frames.length === 0) throw new Error("A background needs at least one frame.");
  const out = new Uint8Array(frames[0]!.length);
  medianInto(frames, out, 0, out.length, exclusions);
  return out;
}

/**
 * The background of a float stack, the float left out: a plain median, the float found in each
 * sampled frame against it, then the median again without discs around the finds. `detect` is
 * the float detector on one sampled frame (crop coordinates offset by `crop`).
 */
export function floatBackground(
  frames: readonly Uint8Array[],
  width: number,
  detect: (frame: Uint8Array, background: Uint8Array) => readonly Detection[],
  crop: { left: number; top: number } = { left: 0, top: 0 },
  shrink = 1,
): Uint8Array {
  const plain = medianBackground(frames);
  const discs = tracerExclusions(
    frames.map((f) => detect(f, plain)),
    crop,
    shrink,
  );
  if (discs.length === 0) return plain;
  const out = new Uint8Array(plain.length);
  const used = new Uint8Array(plain.length);
  medianInto(frames, out, 0, out.length, { width, discs }, used, 1, plain);
  fillFromSurroundings(out, used, width, minimumFreeSamples(frames.length));
  return out;
}

/**
 * The background of a dye stack, interleaved RGB like its frames, the dye left out, the way a
 * float's is built: each channel's plain median, the patch measured in each sampled frame against
 * it (`detect`, which gives the patch's shape), then the median again without the ellipse each
 * patch covers. Pixels with too few free samples are filled in from their surroundings, channel
 * by channel.
 */
export function dyeBackground(
  frames: readonly Uint8Array[],
  width: number,
  detect: (frame: Uint8Array, background: Uint8Array) => readonly Detection[],
  crop: { left: number; top: number } = { left: 0, top: 0 },
  shrink = 1,
): Uint8Array {
  if (frames.length === 0) throw new Error("A background needs at least one frame.");
  const pixels = frames[0]!.length / 3;
  const plain = new Uint8Array(frames[0]!.length);
  medianInto(frames, plain, 0, pixels, undefined, undefined, 3);
  const discs = tracerExclusions(
    frames.map((f) => detect(f, plain)),
    crop,
    shrink,
  );
  if (discs.length === 0) return plain;
  const out = new Uint8Array(plain.length);
  const used = new Uint8Array(pixels);
  medianInto(frames, out, 0, pixels, { width, discs }, used, 3, plain);
  fillChannelsFromSurroundings(out, used, width, 3, minimumFreeSamples(frames.length));
  return out;
}

/**
 * The median for pixels [from, to) only, so several workers can share one background. Samples
 * covered by an exclusion disc at a pixel are left out there (where every sample is covered the
 * plain median stands); `used`, when given, receives how many samples each pixel's median took.
 * Frames of several interleaved channels (RGB for dye) take each channel's median on its own;
 * `from`, `to` and `used` count pixels. `plain`, when given, is the plain median of the same
 * frames, already taken: a pixel no disc covers copies it instead of taking it again, so the
 * second median of a background costs only the pixels near the tracer. `region`, when given,
 * names the pixels (1) whose median is made; the others are left as they are (background-region.ts).
 *
 * Each median is read off a count of the values (bytes, so at most 256 bins, and only those
 * between the pixel's lowest and highest value are visited), which on 21 samples takes less
 * than half the time of sorting them.
 */
export function medianInto(
  frames: readonly Uint8Array[],
  out: Uint8Array,
  from: number,
  to: number,
  exclusions?: ExclusionSet,
  used?: Uint8Array,
  channels = 1,
  plain?: Uint8Array,
  region?: Uint8Array,
): void {
  const length = out.length;
  if (plain && plain.length !== length) throw new Error("The plain median differs in size from the background.");
  for (const frame of frames) {
    if (frame.length !== length) throw new Error("Background frames differ in size.");
  }
  if (!(Number.isInteger(channels) && channels >= 1) || length % channels !== 0) throw new Error("Background frames do not hold whole pixels.");
  const n = frames.length;
  if (n > 255) throw new Error("A background takes at most 255 frames.");
  const counts = new Uint8Array(256);
  const discs = exclusions?.discs ?? [];
  const width = exclusions?.width ?? 0;
  if (discs.length > 0 && !(Number.isInteger(width) && width > 0)) throw new Error("Exclusions need the frames' width.");
  // Per row, the column range each disc covers; rebuilt when the row changes.
  const spanSample: number[] = [];
  const spanFrom: number[] = [];
  const spanTo: number[] = [];
  const left = new Uint8Array(n);
  let row = -1;
  for (let p = from; p < to; p++) {
    if (region && !region[p]) {
      // Outside the pixels anything reads (background-region.ts): left as it is, seen by every sample.
      if (used) used[p] = n;
      continue;
    }
    let covered = 0;
    if (discs.length > 0) {
      const r = Math.floor(p / width);
      if (r !== row) {
        row = r;
        spanSample.length = 0;
        spanFrom.length = 0;
        spanTo.length = 0;
        for (const d of discs) {
          const dy = r - d.y;
          let from: number;
          let to: number;
          if (d.shape) {
            // (dx, dy) S⁻¹ (dx, dy)ᵀ ≤ r², solved for dx on this row.
            const { xx, xy, yy } = d.shape;
            const det = xx * yy - xy * xy;
            if (!(det > 0)) continue;
            const a = yy / det;
            const b = (-xy / det) * dy;
            const c = (xx / det) * dy * dy - d.r * d.r;
            const disc = b * b - a * c;
            if (disc < 0) continue;
            const root = Math.sqrt(disc);
            from = d.x + (-b - root) / a;
            to = d.x + (-b + root) / a;
          } else {
            const half2 = d.r * d.r - dy * dy;
            if (half2 < 0) continue;
            const half = Math.sqrt(half2);
            from = d.x - half;
            to = d.x + half;
          }
          spanSample.push(d.sample);
          spanFrom.push(from);
          spanTo.push(to);
        }
      }
      if (spanSample.length > 0) {
        const col = p - r * width;
        left.fill(0);
        for (let s = 0; s < spanSample.length; s++) {
          const j = spanSample[s]!;
          if (!left[j] && col >= spanFrom[s]! && col <= spanTo[s]!) {
            left[j] = 1;
            covered++;
          }
        }
      }
    }
    const skip = covered > 0 && covered < n;
    if (plain && !skip) {
      // Every sample counts here, as in the plain median.
      for (let c = 0, q = p * channels; c < channels; c++, q++) out[q] = plain[q]!;
      if (used) used[p] = covered >= n ? 0 : n;
      continue;
    }
    let count = 0;
    for (let c = 0, q = p * channels; c < channels; c++, q++) {
      count = 0;
      let lowest = 255;
      let highest = 0;
      for (let j = 0; j < n; j++) {
        if (skip && left[j]) continue;
        const v = frames[j]![q]!;
        counts[v]!++;
        if (v < lowest) lowest = v;
        if (v > highest) highest = v;
        count++;
      }
      out[q] = countedMiddle(counts, lowest, highest, count);
      counts.fill(0, lowest, highest + 1);
    }
    if (used) used[p] = covered >= n ? 0 : count;
  }
}

/**
 * The median of `count` values held as counts per value, all between `lowest` and `highest`; an
 * even count takes the mean of the middle two, rounded.
 */
function countedMiddle(counts: Uint8Array, lowest: number, highest: number, count: number): number {
  const half = count >> 1;
  // The values at sorted positions half − 1 and half (0-based).
  let below = -1;
  let seen = 0;
  for (let v = lowest; v <= highest; v++) {
    seen += counts[v]!;
    if (below < 0 && seen > half - 1) below = v;
    if (seen > half) return count % 2 === 1 ? v : (below + v + 1) >> 1;
  }
  return highest;
}
