/**
 * The dye threshold's marks over a run of detection-image pixels (threshold.ts): each pixel's, or
 * at reduced resolution each block's, change of colour against the stack's colour background
 * (dye-signal.ts) above a level. What the background contributes stays as it is from frame to frame,
 * so it is made once for the background array last given: at full resolution the products of
 * `relativeChangeAbove` (three 16-bit whole numbers a pixel), at reduced resolution the background's block sums
 * (Decision 78). They are made piece by piece (`termSpan` detection-image px of one row), when a
 * search first reads the piece: a background composed anew for every frame (a lab-fixed view of a
 * turning table, turning-compose.ts) then costs the pieces searched, not the whole crop (Decision
 * 91). A background that changes must be a new array (detect.ts says so). A widening search also
 * takes marks back from an earlier round over the same frame (`markKept`, Decision 85). Without a
 * background (fewer than 3 frames) the marks are the pixels whose colour lies in the plan's HSV range.
 */
import { backgroundProducts, markChangeAbove, relativeChangeAbove } from "./dye-signal";
import { hsv, hueInRange } from "./hsv";
import type { DetectionPlan } from "./plan";

/** The background's terms are made in pieces of this many detection-image px of one row (a threshold tile's width). */
const termSpan = 32;
const termShift = 5;

/** The three channels of block (`sx`, `sy`), `k` px a side, of an interleaved RGB image `width` px wide, summed into `out`. */
export function blockSum3(data: Uint8Array, width: number, k: number, sx: number, sy: number, out: Float64Array): void {
  let c0 = 0;
  let c1 = 0;
  let c2 = 0;
  for (let ky = 0; ky < k; ky++) {
    for (let p = 3 * ((sy * k + ky) * width + sx * k), end = p + 3 * k; p < end; p += 3) {
      c0 += data[p]!;
      c1 += data[p + 1]!;
      c2 += data[p + 2]!;
    }
  }
  out[0] = c0;
  out[1] = c1;
  out[2] = c2;
}

/** Copies the marks of [from, to) from `marks` into `mask`; returns how many. */
export function markKept(marks: Uint8Array, mask: Uint8Array, from: number, to: number): number {
  let marked = 0;
  for (let at = from; at < to; at++) {
    if (marks[at] === 0) continue;
    mask[at] = 255;
    marked++;
  }
  return marked;
}

export interface DyeMarker {
  /** The background the next marks are against; when it is a new array its terms are made anew, piece by piece as marks read them. */
  use(background: Uint8Array): void;
  /**
   * Marks (255 in `mask`) the pixels [c0, c1) of detection-image row `sy` whose change of colour
   * against the background exceeds `level`; returns how many.
   */
  mark(img: Uint8Array, mask: Uint8Array, sy: number, c0: number, c1: number, level: number): number;
}

export function createDyeMarker(plan: DetectionPlan): DyeMarker {
  const { smallWidth: sw, smallHeight: sh, shrink: k } = plan;
  const width = plan.crop.width;
  const block = k * k;
  const sums = new Float64Array(3);
  const piecesX = Math.ceil(sw / termSpan);
  /** Full resolution: the products (16 bits hold them exactly, dye-signal.ts); reduced: the block sums, channel by channel. */
  let products = new Uint16Array(0);
  let blockSums = new Float64Array(0);
  let background: Uint8Array = new Uint8Array(0);
  let madeFor: Uint8Array | null = null;
  /** Per piece of a row, the background (by `generation`) its terms were made for; 0: none yet. */
  const madeIn = new Uint32Array(piecesX * sh);
  let generation = 0;

  function use(next: Uint8Array): void {
    if (madeFor === next) return;
    if (k === 1 && products.length !== sw * sh * 3) products = new Uint16Array(sw * sh * 3);
    if (k > 1 && blockSums.length !== sw * sh * 3) blockSums = new Float64Array(sw * sh * 3);
    background = next;
    madeFor = next;
    generation = generation === 0xffffffff ? 1 : generation + 1;
    if (generation === 1) madeIn.fill(0);
  }

  /** The terms of detection-image row `sy`, columns [c0, c1), made for the current background where not yet. */
  function ensureTerms(sy: number, c0: number, c1: number): void {
    const rowAt = sy * sw;
    for (let piece = c0 >> termShift, last = (c1 - 1) >> termShift; piece <= last; piece++) {
      const at = sy * piecesX + piece;
      if (madeIn[at] === generation) continue;
      madeIn[at] = generation;
      const s0 = piece << termShift;
      const s1 = Math.min(sw, s0 + termSpan);
      if (k === 1) {
        backgroundProducts(background, products, rowAt + s0, rowAt + s1);
        continue;
      }
      for (let sx = s0; sx < s1; sx++) {
        blockSum3(background, width, k, sx, sy, sums);
        blockSums.set(sums, 3 * (rowAt + sx));
      }
    }
  }

  function mark(img: Uint8Array, mask: Uint8Array, sy: number, c0: number, c1: number, level: number): number {
    if (c0 >= c1) return 0;
    ensureTerms(sy, c0, c1);
    const rowAt = sy * sw;
    if (k === 1) return markChangeAbove(img, products, mask, rowAt + c0, rowAt + c1, level);
    let marked = 0;
    for (let sx = c0; sx < c1; sx++) {
      blockSum3(img, width, k, sx, sy, sums);
      const b = 3 * (rowAt + sx);
      const above = relativeChangeAbove(
        sums[0]! / block,
        sums[1]! / block,
        sums[2]! / block,
        blockSums[b]! / block,
        blockSums[b + 1]! / block,
        blockSums[b + 2]! / block,
        level,
      );
      if (!above) continue;
      mask[rowAt + sx] = 255;
      marked++;
    }
    return marked;
  }

  return { use, mark };
}

export interface ColourMarker {
  /**
   * Marks (255 in `mask`) the pixels [c0, c1) of detection-image row `sy` whose colour (a block's
   * mean at reduced resolution) lies in the plan's HSV range; returns the mask index of the first
   * marked, or −1. For dye without a background (fewer than 3 frames).
   */
  mark(img: Uint8Array, mask: Uint8Array, sy: number, c0: number, c1: number): number;
}

export function createColourMarker(plan: DetectionPlan): ColourMarker {
  const { smallWidth: sw, shrink: k } = plan;
  const width = plan.crop.width;
  const block = k * k;
  const { hueMin, hueMax, satMin, valMin } = plan.dyeColour;
  // At full resolution the channels are whole numbers, and so is the usual saturation limit:
  // then 255·(v − least) < satMin·v decides exactly what the quotient would, without a division
  // for every pixel of water.
  const wholeSaturation = k === 1 && Number.isInteger(satMin);
  const sums = new Float64Array(3);
  const colour = new Float64Array(3);
  return {
    mark(img, m, sy, c0, c1) {
      const rowAt = sy * sw;
      let first = -1;
      for (let sx = c0; sx < c1; sx++) {
        let r: number;
        let g: number;
        let bl: number;
        if (k === 1) {
          const p = 3 * (rowAt + sx);
          r = img[p]!;
          g = img[p + 1]!;
          bl = img[p + 2]!;
        } else {
          blockSum3(img, width, k, sx, sy, sums);
          r = sums[0]! / block;
          g = sums[1]! / block;
          bl = sums[2]! / block;
        }
        const v = r > g ? (r > bl ? r : bl) : g > bl ? g : bl;
        // Value and saturation reject the water before any hue is worked out.
        if (v < valMin) continue;
        const least = r < g ? (r < bl ? r : bl) : g < bl ? g : bl;
        if (wholeSaturation ? 255 * (v - least) < satMin * v : (255 * (v - least)) / v < satMin) continue;
        hsv(r, g, bl, colour);
        if (!hueInRange(colour[0]!, hueMin, hueMax)) continue;
        m[rowAt + sx] = 255;
        if (first < 0) first = rowAt + sx;
      }
      return first;
    },
  };
}
