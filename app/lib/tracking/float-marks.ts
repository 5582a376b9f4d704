/**
 * A float's threshold marks (threshold.ts): each pixel, or at reduced resolution each block (its
 * sum), brighter than the background by more than the level. At full resolution most of a tank is
 * water below the level, so four pixels are judged at once where both arrays allow it: two 16-bit lanes of a 32-bit word hold two pixels'
 * differences, offset so that the lane's bit 9 is set exactly when the pixel passes. The marks are
 * the same as judging pixel by pixel (float-marks.test.ts compares them).
 */
import type { DetectionPlan } from "./plan";

/** Word views of the last image and background seen (a frame's arrays are new views every task). */
interface WordView {
  of: Uint8Array | null;
  words: Uint32Array | null;
}

/** Byte j of a word is pixel 4w + j only on a little-endian machine (every one Node is built for but s390x). */
const littleEndian = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;

function wordsOf(view: WordView, bytes: Uint8Array): Uint32Array | null {
  if (view.of !== bytes) {
    view.of = bytes;
    view.words = littleEndian && bytes.byteOffset % 4 === 0 ? new Uint32Array(bytes.buffer, bytes.byteOffset, bytes.length >> 2) : null;
  }
  return view.words;
}

export interface FloatMarker {
  /**
   * Marks (255) in `mask` each pixel [c0, c1) of detection-image row `sy` whose difference from
   * the background (a block's summed difference at reduced resolution) exceeds `level`, leaving
   * the others as they are; returns the mask index of the first marked, or −1 when none was
   * (at full resolution it may return a pixel just before the first marked).
   */
  mark(image: Uint8Array, background: Uint8Array, mask: Uint8Array, sy: number, c0: number, c1: number, level: number): number;
}

/** Marks of pixels p in [from, to) with image[p] − background[p] > level, at full resolution (the detection image is the crop). */
export interface PixelMarker {
  mark(image: Uint8Array, background: Uint8Array, mask: Uint8Array, from: number, to: number, level: number): number;
}

export function createFloatMarker(plan: DetectionPlan): FloatMarker {
  const { smallWidth: sw, shrink: k } = plan;
  const width = plan.crop.width;
  const pixels = createPixelMarker();
  const blockSums = new Float64Array(sw);
  return {
    mark(img, bg, m, sy, c0, c1, level) {
      const rowAt = sy * sw;
      if (k === 1) return pixels.mark(img, bg, m, rowAt + c0, rowAt + c1, level);
      blockSums.fill(0, c0, c1);
      for (let ky = 0; ky < k; ky++) {
        const base = (sy * k + ky) * width;
        for (let sx = c0; sx < c1; sx++) {
          let sum = 0;
          for (let p = base + sx * k, end = p + k; p < end; p++) sum += img[p]! - bg[p]!;
          blockSums[sx]! += sum;
        }
      }
      let first = -1;
      for (let sx = c0; sx < c1; sx++) {
        if (blockSums[sx]! > level) {
          m[rowAt + sx] = 255;
          if (first < 0) first = rowAt + sx;
        }
      }
      return first;
    },
  };
}

/** Four pixels judged at once where the arrays allow it; the same marks as one by one. */
export function createPixelMarker(): PixelMarker {
  const imageView: WordView = { of: null, words: null };
  const backgroundView: WordView = { of: null, words: null };

  function markEach(img: Uint8Array, bg: Uint8Array, m: Uint8Array, from: number, to: number, least: number): number {
    let first = -1;
    for (let p = from; p < to; p++) {
      if (img[p]! - bg[p]! >= least) {
        m[p] = 255;
        if (first < 0) first = p;
      }
    }
    return first;
  }

  return {
    mark(img, bg, m, from, to, level) {
      // Differences are whole numbers: d > level exactly when d ≥ least.
      const least = Math.floor(level) + 1;
      if (least > 255) return -1;
      const a32 = least >= 1 ? wordsOf(imageView, img) : null;
      const b32 = a32 ? wordsOf(backgroundView, bg) : null;
      if (!a32 || !b32 || to - from < 8) return markEach(img, bg, m, from, to, least);
      const w0 = (from + 3) >> 2;
      const w1 = to >> 2;
      let first = markEach(img, bg, m, from, w0 << 2, least);
      // Each lane holds a + 512 − least − b, in 0…766 for 1 ≤ least ≤ 255: no borrow crosses lanes,
      // and bit 9 is set exactly when a − b ≥ least.
      const bias = (512 - least) * 0x00010001;
      for (let w = w0; w < w1; w++) {
        const a = a32[w]!;
        const b = b32[w]!;
        const even = ((a & 0x00ff00ff) + bias - (b & 0x00ff00ff)) & 0x02000200;
        const odd = (((a >>> 8) & 0x00ff00ff) + bias - ((b >>> 8) & 0x00ff00ff)) & 0x02000200;
        if ((even | odd) === 0) continue;
        const p = w << 2;
        if (even & 0x200) m[p] = 255;
        if (odd & 0x200) m[p + 1] = 255;
        if (even & 0x2000000) m[p + 2] = 255;
        if (odd & 0x2000000) m[p + 3] = 255;
        if (first < 0) first = p;
      }
      const tail = markEach(img, bg, m, Math.max(from, w1 << 2), to, least);
      return first >= 0 ? first : tail;
    },
  };
}
