/**
 * The part of the scene that turns in the camera's view, as a second background model.
 *
 * A lab-fixed camera sees the table turn: the bottom's grid, its marks and the water turn about
 * the rotation centre at Ω, while the room, the lamps and their glare on the water stay put. A
 * co-rotating camera sees the opposite: the table stands still and the room and the glare turn at
 * −Ω. A per-pixel median of frames (background.ts) models only what stands still in the view; what
 * turns is smeared round the centre, or kept in one place while the frame shows it elsewhere.
 *
 * So a second model is made in the turning frame: each sampled frame is turned back about the
 * centre by the angle the turning part had reached at its time (bilinear), the median is taken
 * there (the tracer left out as in the still model), and for each searched frame it is turned
 * forward again by the angle of that frame's time. Pixels the still model already explains over
 * the samples (mean square misfit within a few times the typical one) keep the still model
 * alone; where enough do not, each frame, over the whole turning disc, adds the turning model's departure from its ring average to the still
 * model (backgroundAt): the light a lamp throws on the water adds to the grid seen through it.
 *
 * Angles here are image angles (from the column axis towards the row axis, rows pointing down);
 * `turnRateInView` converts the table's Ω and the camera mode to one.
 */
import type { BackgroundExclusion } from "./background";
import { discBox, discPixels, inTurningDisc, turnDistance, type TurnInView } from "./turning-geometry";

export type { TurnInView } from "./turning-geometry";

/**
 * The image-angle rate of what turns in view. Ω is counter-clockwise seen from above; a view from
 * above with rows pointing down shows that as a negative image angle, and a mirror flips it. A
 * lab-fixed camera sees the table turn at Ω; a co-rotating one sees the room turn at −Ω.
 */
export function turnRateInView(omega: number, cameraMode: "rotating" | "lab", mirrored: boolean): number {
  const tableSense = cameraMode === "lab" ? omega : -omega;
  return mirrored ? tableSense : -tableSense;
}

/**
 * Samples the turning frame out of one frame: `out(q) = frame(c + R(angle)(q − c))` inside the
 * turning disc (bilinear), the frame itself outside it. `angle` is the turning part's angle at the
 * frame's time. A frame of interleaved channels (RGB for dye) turns each channel alike.
 */
export function turnBack(frame: Uint8Array, width: number, height: number, turn: TurnInView, angle: number, out: Uint8Array, channels = 1): void {
  if (frame.length !== width * height * channels || out.length !== frame.length) throw new Error("A turned frame must match the frame's size.");
  const cos = Math.cos(angle);
  const sin = Math.sin(angle);
  if (turn.rectify) throw new Error("A tilted view's turning model is made by turningMedian (turning-median.ts).");
  const r2 = turn.r * turn.r;
  for (let row = 0; row < height; row++) {
    const dy = row - turn.cy;
    for (let col = 0; col < width; col++) {
      const p = row * width + col;
      const dx = col - turn.cx;
      if (dx * dx + dy * dy > r2) {
        for (let c = 0; c < channels; c++) out[p * channels + c] = frame[p * channels + c]!;
        continue;
      }
      const x = turn.cx + cos * dx - sin * dy;
      const y = turn.cy + sin * dx + cos * dy;
      if (channels === 1) out[p] = Math.round(bilinear(frame, width, height, x, y));
      else for (let c = 0; c < channels; c++) out[p * channels + c] = Math.round(bilinear(frame, width, height, x, y, channels, c));
    }
  }
}

/** `image` at (x, y), bilinear; of channel `channel` when its `channels` are interleaved. */
export function bilinear(image: ArrayLike<number>, width: number, height: number, x: number, y: number, channels = 1, channel = 0): number {
  const x0 = Math.min(width - 2, Math.max(0, Math.floor(x)));
  const y0 = Math.min(height - 2, Math.max(0, Math.floor(y)));
  const fx = Math.min(1, Math.max(0, x - x0));
  const fy = Math.min(1, Math.max(0, y - y0));
  const p = (y0 * width + x0) * channels + channel;
  const right = p + channels;
  const below = p + width * channels;
  const top = image[p]! + fx * (image[right]! - image[p]!);
  const bottom = image[below]! + fx * (image[below + channels]! - image[below]!);
  return top + fy * (bottom - top);
}

/** The still model's exclusion discs moved into the turning frame (sample j turned back by its angle). */
export function turnExclusions(discs: readonly BackgroundExclusion[], turn: TurnInView, angles: readonly number[]): BackgroundExclusion[] {
  if (turn.rectify) throw new Error("A tilted view's turning model leaves the float out itself (turning-median.ts).");
  return discs.map((d) => {
    const angle = angles[d.sample] ?? 0;
    const cos = Math.cos(angle);
    const sin = Math.sin(angle);
    const dx = d.x - turn.cx;
    const dy = d.y - turn.cy;
    // The inverse of turnBack's map: q = c + R(−angle)(p − c); a dye patch's ellipse turns with it
    // (its second moments become R(−angle) S R(−angle)ᵀ).
    const moved = { ...d, x: turn.cx + cos * dx + sin * dy, y: turn.cy - sin * dx + cos * dy };
    if (d.shape) {
      const { xx, xy, yy } = d.shape;
      moved.shape = {
        xx: cos * cos * xx + 2 * cos * sin * xy + sin * sin * yy,
        xy: (cos * cos - sin * sin) * xy + cos * sin * (yy - xx),
        yy: sin * sin * xx - 2 * cos * sin * xy + cos * cos * yy,
      };
    }
    return moved;
  });
}

/**
 * Mean square difference between each sample and a model, pixels [from, to), the samples a disc
 * covers at a pixel left out (where all are covered: +∞). Written into `out`; with `stride`, only
 * at pixels whose row and column are multiples of it (the rest are left as they are). Samples of
 * interleaved `channels` give the mean over their channels too.
 */
export function meanSquareMisfit(
  samples: readonly Uint8Array[],
  model: Uint8Array,
  width: number,
  from: number,
  to: number,
  discs: readonly BackgroundExclusion[],
  out: Float32Array,
  stride = 1,
  channels = 1,
): void {
  const n = samples.length;
  const covered = new Uint8Array(n);
  let row = -1;
  const spans: { sample: number; from: number; to: number }[] = [];
  for (let p = from; p < to; p++) {
    const r = Math.floor(p / width);
    if (r % stride !== 0) {
      // On to the next row (the loop's p++ lands on its first pixel).
      p = (r + 1) * width - 1;
      continue;
    }
    if (r !== row) {
      row = r;
      spans.length = 0;
      for (const d of discs) {
        // The disc's bounding circle: an ellipse's largest extent is r·√(largest eigenvalue); a disc's is r.
        const reach = d.shape ? d.r * Math.sqrt(Math.max(d.shape.xx, d.shape.yy) + Math.abs(d.shape.xy)) : d.r;
        const dy = r - d.y;
        const half2 = reach * reach - dy * dy;
        if (half2 < 0) continue;
        const half = Math.sqrt(half2);
        spans.push({ sample: d.sample, from: d.x - half, to: d.x + half });
      }
    }
    const col = p - r * width;
    if (col % stride !== 0) continue;
    if (spans.length > 0) {
      covered.fill(0);
      for (const s of spans) if (col >= s.from && col <= s.to) covered[s.sample] = 1;
    }
    let sum = 0;
    let count = 0;
    for (let c = 0; c < channels; c++) {
      const q = p * channels + c;
      const m = model[q]!;
      for (let j = 0; j < n; j++) {
        if (spans.length > 0 && covered[j]) continue;
        const d = samples[j]![q]! - m;
        sum += d * d;
        count++;
      }
    }
    out[p] = count > 0 ? sum / count : Number.POSITIVE_INFINITY;
  }
}

/**
 * How many times the typical misfit a pixel's may reach before the still model is doubted there.
 * The typical misfit is the tenth percentile over the turning disc: for noise alone a mean of 21
 * squares, about 0.6 σ², so the limit is about 2.5 σ², which noise passes at a fraction of a
 * percent of pixels.
 */
export const doubtFactor = 4;
const typicalQuantile = 0.1;
/** Lowest misfit (grey levels squared) that is doubted, for nearly noiseless frames. */
const minDoubtedMisfit = 9;

/** The share of the turning disc's pixels that must be doubted before a turning model is made. */
export const minDoubtedShare = 0.02;

/**
 * The pixels of the turning disc (crop indices, ascending) when something turns through it: when
 * more than `minDoubtedShare` of them (judged on every `stride`-th row and column) misfit the still model by well over the typical misfit;
 * else null, and the still model stands alone. The turning model then applies over the whole
 * disc, since a lamp's light fades out far beyond where it makes the still model fail.
 */
export function turningPixels(misfit: Float32Array, width: number, turn: TurnInView, stride = 1): Int32Array | null {
  const judged: number[] = [];
  const height = Math.floor(misfit.length / width);
  const { row0, row1, col0, col1 } = discBox(turn, width, height);
  const scratch = new Float64Array(2);
  const inDisc = (col: number, row: number) => inTurningDisc(turn, col, row, scratch);
  // Only the judged pixels first: most stacks turn nothing through the view, and then the disc's
  // own list (every pixel of it) is never needed.
  for (let row = Math.ceil(row0 / stride) * stride; row <= row1; row += stride) {
    for (let col = Math.ceil(col0 / stride) * stride; col <= col1; col += stride) {
      if (inDisc(col, row)) judged.push(row * width + col);
    }
  }
  if (judged.length === 0) return null;
  // The noise's share of the misfit: a low quantile, since what turns may pass through most pixels.
  const values = Float32Array.from(judged, (p) => misfit[p]!).sort();
  const typical = values[Math.floor(values.length * typicalQuantile)]!;
  const limit = Math.max(minDoubtedMisfit, doubtFactor * typical);
  let doubted = 0;
  for (const p of judged) if (misfit[p]! > limit) doubted++;
  if (!(doubted > minDoubtedShare * judged.length)) return null;
  return discPixels(turn, width, height);
}

/** Both models of a stack, as the searched frames use them. */
export interface TurningBackground {
  turn: TurnInView;
  /** The median in the turning frame at angle 0 (crop px). */
  turning: Uint8Array;
  /** The turning model's median round each ring about the centre (1 px rings): the part both models hold. */
  rings: Float32Array;
  /** Crop pixels where the turning model takes part (turningPixels). */
  pixels: Int32Array;
  /**
   * A tilted view's turning model as a factor on the still model's darkness, in the turning frame
   * (turning-median.ts); when present, `turning` and `rings` are not used.
   */
  factor?: Float32Array | null;
}

/**
 * The median of the turning model over each 1 px ring about the centre, ring i holding the pixels
 * at distance [i, i + 1). A ring's median is what does not depend on the angle (the illumination
 * a ring gets on average, the rings of a grid), which the still model holds too. With interleaved
 * `channels`, each channel's: ring i's channel c at i·channels + c.
 */
export function ringMedians(turning: Uint8Array, width: number, turn: TurnInView, channels = 1): Float32Array {
  const count = Math.ceil(turn.r) + 1;
  const rings: number[][] = Array.from({ length: count * channels }, () => []);
  const height = Math.floor(turning.length / (width * channels));
  const { row0, row1, col0, col1 } = discBox(turn, width, height);
  const scratch = new Float64Array(2);
  for (let row = row0; row <= row1; row++) {
    for (let col = col0; col <= col1; col++) {
      const i = Math.floor(turnDistance(turn, col, row, scratch));
      if (i < count) for (let c = 0; c < channels; c++) rings[i * channels + c]!.push(turning[(row * width + col) * channels + c]!);
    }
  }
  const out = new Float32Array(count * channels);
  for (let c = 0; c < channels; c++) {
    let last = 0;
    for (let i = 0; i < count; i++) {
      const values = rings[i * channels + c]!;
      if (values.length > 0) {
        values.sort((x, y) => x - y);
        last = values[values.length >> 1]!;
      }
      out[i * channels + c] = last;
    }
  }
  return out;
}
