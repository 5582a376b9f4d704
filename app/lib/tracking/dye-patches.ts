/**
 * Which dye blobs of a frame are patches of their own (detect.ts): the noise of the change of
 * colour the threshold works from, each blob's strength, and the finds kept once measured.
 *
 * A dye's coloured shadow on the bottom is lit by only part of the light, so it changes the colour
 * less, in ratios, than the dye seen through (dye-signal.ts): a blob under `shadowShare` of the
 * frame's strongest is taken for a shadow and not measured. The comparison is within the frame, so
 * two patches of very unequal strength in one frame lose the weaker one. One patch can leave
 * several blobs where the cleaning splits its faint edge; their measured centres meet, and the
 * weaker of two within `samePatchSigmas` of the stronger's shape is dropped.
 */
import { relativeChangeSquared } from "./dye-signal";
import { robustStats } from "./robust-stats";
import type { Detection } from "./types";

/** A dye patch changing the colour less than this share of the frame's strongest is taken for its shadow. */
export const shadowShare = 0.5;
/** Finds of one frame within this many of a stronger patch's standard deviations are that patch. */
const samePatchSigmas = 2;
/** Histogram bins per unit of a dye's change of colour (|s|, dye-signal.ts), up to a change of 0.5. */
const changeBins = 2048;
/**
 * The change of colour is sampled on every 8th pixel of every 8th row (some 7000 in a 670 px tank):
 * in each row one position of JPEG's 8 × 8 blocks. Sampling every position (as dye-centre.ts does)
 * read a 7 % smaller width on the bench's stack, and the threshold at 5 widths then marked more of
 * JPEG's colour noise and cost time (Decision 80), so the threshold keeps this sampling.
 */
const colourNoiseStride = 8;

/**
 * Offset and noise of the change of colour in ratios (|s|, dye-signal.ts) over the tank, for the
 * threshold: the median and MAD-based width. `spans` holds per row the half-open column range
 * inside the tank edge.
 */
export function createColourNoise(width: number, height: number, spans: Int32Array) {
  const hist = new Uint32Array(changeBins / 2 + 1);
  const last = hist.length - 1;
  return function colourNoise(img: Uint8Array, background: Uint8Array): { median: number; sigma: number } {
    hist.fill(0);
    for (let row = 0; row < height; row += colourNoiseStride) {
      const a = spans[2 * row]!;
      const b = spans[2 * row + 1]!;
      for (let col = a; col < b; col += colourNoiseStride) {
        const q = 3 * (row * width + col);
        const change = Math.sqrt(relativeChangeSquared(img[q]!, img[q + 1]!, img[q + 2]!, background[q]!, background[q + 1]!, background[q + 2]!));
        hist[Math.min(last, Math.round(change * changeBins))]!++;
      }
    }
    const stats = robustStats(hist, 0);
    return { median: stats.median / changeBins, sigma: stats.sigma / changeBins };
  };
}

/** The detection image's labels: which blob holds each block of `shrink` px. */
export interface BlobLabels {
  labels: Uint8Array;
  width: number;
  height: number;
  shrink: number;
}

/**
 * A dye blob's strength: the highest change of colour in ratios (dye-signal.ts) over its own
 * pixels, each read from the 3 × 3 pixels around it (a single pixel's noise would decide it).
 */
export function blobStrength(
  blobs: BlobLabels,
  blob: { label: number; rect: { x: number; y: number; width: number; height: number } },
  img: Uint8Array,
  background: Uint8Array,
  width: number,
  height: number,
): number {
  const { labels, width: sw, height: sh, shrink: k } = blobs;
  let most = 0;
  const row0 = Math.max(1, blob.rect.y * k);
  const row1 = Math.min(height - 1, (blob.rect.y + blob.rect.height) * k);
  const col0 = Math.max(1, blob.rect.x * k);
  const col1 = Math.min(width - 1, (blob.rect.x + blob.rect.width) * k);
  for (let row = row0; row < row1; row++) {
    const labelRow = Math.min(sh - 1, Math.floor(row / k)) * sw;
    for (let col = col0; col < col1; col++) {
      if (labels[labelRow + Math.min(sw - 1, Math.floor(col / k))] !== blob.label) continue;
      let i0 = 0;
      let i1 = 0;
      let i2 = 0;
      let b0 = 0;
      let b1 = 0;
      let b2 = 0;
      for (let r = row - 1; r <= row + 1; r++) {
        for (let q = 3 * (r * width + col - 1), end = q + 9; q < end; q += 3) {
          i0 += img[q]!;
          i1 += img[q + 1]!;
          i2 += img[q + 2]!;
          b0 += background[q]!;
          b1 += background[q + 1]!;
          b2 += background[q + 2]!;
        }
      }
      most = Math.max(most, relativeChangeSquared(i0, i1, i2, b0, b1, b2));
    }
  }
  return Math.sqrt(most);
}

/**
 * The dye finds of one frame that are patches of their own: a find whose measured centre lies
 * within `samePatchSigmas` of a stronger find's shape is that patch again (one patch can leave
 * several blobs, split by the cleaning where its edge is faint), and a find changing the colour
 * less than `shadowShare` as much as the frame's strongest is taken for a shadow of it.
 */
export function distinctPatches(patches: readonly { detection: Detection; change: number }[]): Detection[] {
  const strongest = patches.reduce((most, p) => Math.max(most, p.change), 0);
  const kept: Detection[] = [];
  for (const p of [...patches].sort((a, b) => b.change - a.change)) {
    if (!(p.change >= shadowShare * strongest)) continue;
    const d = p.detection;
    const same = kept.some((k) => {
      if (!k.spread) return false;
      const { xx, xy, yy } = k.spread;
      const det = xx * yy - xy * xy;
      const dx = d.x - k.x;
      const dy = d.y - k.y;
      return det > 0 && (yy * dx * dx - 2 * xy * dx * dy + xx * dy * dy) / det <= samePatchSigmas * samePatchSigmas;
    });
    if (!same) kept.push(d);
  }
  return kept;
}
