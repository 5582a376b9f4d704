/**
 * A dye patch's signal at each pixel of one frame, for dye-centre.ts: the difference from the
 * background over the bottom's level (dye-signal.ts, dye-bottom.ts), projected on the patch's own
 * direction, its brightness part held within a slack of what its colour part says, worked out once
 * per pixel per measurement; and which pixels are clipped, with the signal at a point between
 * pixels for a clipped pixel's mirror image.
 */
import { bottomLevel, fitBottomSurface } from "./dye-bottom";
import { inverseLevel, levelDifference } from "./dye-signal";
import { inverseFreeLevel, linearDifference, stillGlare } from "./dye-unmix";
import { noiseColumnStride, noiseRowStride, robustStats } from "./robust-stats";
import type { DyeLight } from "./types";

/** The bottom's surface is fitted on every 8th pixel of every 8th row. */
const surfaceStride = 8;
/** Histogram bins per unit of signal (a relative change of colour), and its half-range. */
const binsPerUnit = 4096;
const halfRange = 0.5;
/** A pixel with a channel at or above this is clipped (saturated glare): it tells nothing of the dye. */
const clippedLevel = 250;

export interface PatchSignal {
  /**
   * The frame and background measured next. The bottom's level is fitted to `bottomFrom` once per
   * array: the background itself, or the stack's still model when `background` is composed for this
   * frame from it and a turning model (a new array every frame, turning-background.ts).
   */
  useFrame(image: Uint8Array, background: Uint8Array, bottomFrom?: Uint8Array): void;
  /** The difference per channel over the (capped) background level at pixel `p`, into `out`. */
  difference(p: number, out: Float64Array): void;
  /**
   * A new measurement: the signal is b·m' + c·a, with a the colour part along `hue` (unit, summing
   * to zero), m the brightness part (the channels' mean) and m' = m held within `slack` of
   * `brightPerColour`·a. Signals worked out before belong to another measurement.
   */
  aim(hue: Float64Array, b: number, c: number, brightPerColour: number, slack: number): void;
  /** The signal at pixel `p`. */
  at(p: number): number;
  /** The median and robust width of the signal over the searched spans (a patch is a small part of them). */
  spread(): { median: number; sigma: number };
  /** The signal at pixel `p`, worked out once per measurement. */
  once(p: number): number;
  /** Whether a pixel lies outside the frame or is clipped in some channel. */
  clipped(col: number, row: number): boolean;
  /**
   * The signal at a point between pixel centres (bilinear); null when one of the four pixels round
   * it is clipped. `read` gives a pixel's signal instead of `once` (the same signal with something
   * taken out, such as the patch's shadow copies: a clipped pixel standing in for its mirror image
   * must read what that image reads, or the pair pulls towards the clipped side).
   */
  mirrored(atX: number, atY: number, read?: (col: number, row: number) => number): number | null;
}

/** A pixel reader read between pixel centres: bilinear over the four pixels round (`x`, `y`). */
export function bilinearAt(read: (col: number, row: number) => number, x: number, y: number): number {
  const c = Math.floor(x);
  const r = Math.floor(y);
  const fx = x - c;
  const fy = y - r;
  return (1 - fy) * ((1 - fx) * read(c, r) + fx * read(c + 1, r)) + fy * ((1 - fx) * read(c, r + 1) + fx * read(c + 1, r + 1));
}

/**
 * For frames of one size; `spans` holds, per row, the half-open column range searched. `light`:
 * the difference in the frames' 8-bit values (`encoded`), or in linear light over the bottom's
 * level free of the still model's glare (`linear`, dye-unmix.ts).
 */
export function createPatchSignal(width: number, height: number, spans: Int32Array, light: DyeLight = "encoded"): PatchSignal {
  let img: Uint8Array = new Uint8Array(0);
  let bg: Uint8Array = new Uint8Array(0);
  const change = new Float64Array(3);
  const hue = new Float64Array(3);
  let brightCoefficient = 0;
  let colourCoefficient = 1;
  let brightPerColour = 0;
  let brightSlack = Infinity;
  // The window's passes visit mostly the same pixels, and a pixel's signal is fixed for the
  // measurement: each is worked out once (`stamp` says for which measurement).
  const signals = new Float64Array(width * height);
  const stamp = new Uint32Array(width * height);
  let measurement = 0;
  /**
   * Per pixel, the bottom's level plus its margin (`caps`) and 1 over the background's level taken
   * as at most that (dye-signal.ts, dye-bottom.ts): made once per array the bottom is fitted to
   * (the tracking worker hands the detector the same array for the same background, and one that
   * changes must be a new array, as for the threshold's sums). A background composed per frame
   * divides by its own level under the same caps, worked out pixel by pixel as it is read.
   */
  let levelsOf: Uint8Array | null = null;
  const caps = new Float32Array(width * height);
  const inverseLevels = new Float32Array(width * height);
  const linear = light === "linear";
  /** In linear light: the white glare the still model holds over the bottom's level, per pixel (dye-unmix.ts). */
  const glares = linear ? new Float32Array(width * height) : new Float32Array(0);

  function makeLevels(from: Uint8Array): void {
    const surface = fitBottomSurface(from, width, height, spans, surfaceStride);
    for (let row = 0, p = 0; row < height; row++) {
      for (let col = 0; col < width; col++, p++) {
        const cap = surface ? bottomLevel(surface, col, row) + surface.margin : Infinity;
        caps[p] = cap;
        if (linear) {
          const glare = stillGlare(from[3 * p]!, from[3 * p + 1]!, from[3 * p + 2]!, cap);
          glares[p] = glare;
          inverseLevels[p] = inverseFreeLevel(from[3 * p]!, from[3 * p + 1]!, from[3 * p + 2]!, glare);
        } else {
          inverseLevels[p] = inverseLevel(from[3 * p]!, from[3 * p + 1]!, from[3 * p + 2]!, cap);
        }
      }
    }
  }

  function encodedDifference(p: number, out: Float64Array): void {
    const q = 3 * p;
    const b0 = bg[q]!;
    const b1 = bg[q + 1]!;
    const b2 = bg[q + 2]!;
    levelDifference(img[q]!, img[q + 1]!, img[q + 2]!, b0, b1, b2, out, bg === levelsOf ? inverseLevels[p] : inverseLevel(b0, b1, b2, caps[p]));
  }

  function linearLightDifference(p: number, out: Float64Array): void {
    const q = 3 * p;
    const b0 = bg[q]!;
    const b1 = bg[q + 1]!;
    const b2 = bg[q + 2]!;
    // A background composed for this frame holds the still model's glare where the still model does.
    linearDifference(img[q]!, img[q + 1]!, img[q + 2]!, b0, b1, b2, out, bg === levelsOf ? inverseLevels[p]! : inverseFreeLevel(b0, b1, b2, glares[p]!));
  }

  /** Chosen once: the per-pixel path of the frames' own values stays as it was, without a test per pixel. */
  const difference = linear ? linearLightDifference : encodedDifference;

  // White glare the background lacks adds to the brightness alone, a line or shadow it lacks takes
  // from it: beyond the slack a pixel's brightness tells of something other than the dye.
  function at(p: number): number {
    difference(p, change);
    const mean = (change[0]! + change[1]! + change[2]!) / 3;
    const along = change[0]! * hue[0]! + change[1]! * hue[1]! + change[2]! * hue[2]!;
    const expected = brightPerColour * along;
    const bright = Math.min(expected + brightSlack, Math.max(expected - brightSlack, mean));
    return brightCoefficient * bright + colourCoefficient * along;
  }

  const hist = new Uint32Array(2 * halfRange * binsPerUnit + 1);
  function spread(): { median: number; sigma: number } {
    hist.fill(0);
    for (let row = 0; row < height; row += noiseRowStride) {
      const a = spans[2 * row]!;
      const b = spans[2 * row + 1]!;
      for (let col = a; col < b; col += noiseColumnStride) {
        const s = at(row * width + col);
        const bin = Math.round((Math.max(-halfRange, Math.min(halfRange, s)) + halfRange) * binsPerUnit);
        hist[bin]!++;
      }
    }
    const stats = robustStats(hist, halfRange * binsPerUnit);
    return { median: stats.median / binsPerUnit, sigma: stats.sigma / binsPerUnit };
  }

  const onceAt = (col: number, row: number) => once(row * width + col);

  function once(p: number): number {
    if (stamp[p] === measurement) return signals[p]!;
    const s = at(p);
    signals[p] = s;
    stamp[p] = measurement;
    return s;
  }

  function clipped(col: number, row: number): boolean {
    if (col < 0 || col >= width || row < 0 || row >= height) return true;
    const q = 3 * (row * width + col);
    return img[q]! >= clippedLevel || img[q + 1]! >= clippedLevel || img[q + 2]! >= clippedLevel;
  }

  return {
    useFrame(image, background, bottomFrom = background) {
      img = image;
      bg = background;
      if (bottomFrom !== levelsOf) {
        levelsOf = bottomFrom;
        makeLevels(bottomFrom);
      }
    },
    difference,
    aim(direction, b, c, perColour, slack) {
      hue.set(direction);
      brightCoefficient = b;
      colourCoefficient = c;
      brightPerColour = perColour;
      brightSlack = slack;
      measurement = measurement === 0xffffffff ? 1 : measurement + 1;
      if (measurement === 1) stamp.fill(0);
    },
    at,
    spread,
    once,
    clipped,
    mirrored(atX, atY, read) {
      const c = Math.floor(atX);
      const r = Math.floor(atY);
      if (clipped(c, r) || clipped(c + 1, r) || clipped(c, r + 1) || clipped(c + 1, r + 1)) return null;
      return bilinearAt(read ?? onceAt, atX, atY);
    },
  };
}
