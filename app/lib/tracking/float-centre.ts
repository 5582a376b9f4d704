/**
 * A float's sub-pixel centre on a cluttered background: grid lines, its own shadow and glare.
 *
 * The float's face is brighter than what lies under it and evenly lit, so a pixel's share of it
 * is its rise over the background as a fraction of the face's own rise there:
 * m = (I − B) / (F − B), with F the face's brightness. Weighting by the rise I − B alone (as
 * before) gave a face over a dark grid line up to four times the weight of the same face over
 * the grey bottom, and pulled the centroid onto the line. The share does not depend on B, so the
 * centre stays where the face is. Pixels darker than the background (the float's shadow, lines
 * that turned into view) have a negative share and weigh nothing. The weights above a floor of
 * three noise units (the same floor as before, as a share of the face's mean rise) give the
 * centroid; on a smooth background that is the rise-weighted centroid it replaces.
 *
 * Where the background is nearly as bright as the face (a lamp's glare on the water, saturated)
 * the share cannot be read: such pixels are left out and counted (`unknown`). A float partly in
 * such glare is centred on its visible part. Filling the hidden part from the visible part's
 * mirror image through the centre was tried: the iteration settles on a centre between the
 * visible part's and the true one, since the mirror of a hidden cap reaches past the float's far
 * edge; the float's radius would be needed, and is not known to one frame.
 */

/** A rise smaller than this many noise units over the background leaves a pixel's share unknown. */
export const unknownBelowSigmas = 6;
/** The lowest such rise, grey levels, for nearly noiseless frames. */
const minReadableRise = 12;

export interface FloatPatch {
  /** The frame and its background, one channel, row-major, `width` wide. */
  image: Uint8Array;
  background: Uint8Array;
  width: number;
  /** The searched rows' column ranges (half-open, two per row), so pixels outside the tank are skipped. */
  spans: Int32Array;
  /** The float's pixels: the blob found, full-resolution box [col0, col1) × [row0, row1). */
  col0: number;
  col1: number;
  row0: number;
  row1: number;
  /** Whether a pixel may count (not another blob's). */
  free: (col: number, row: number) => boolean;
  /** The noise's offset and spread of I − B over the frame. */
  offset: number;
  sigma: number;
  /** How many noise units above the background a pixel's rise must be to weigh. */
  floorSigmas: number;
}

export interface FloatCentre {
  x: number;
  y: number;
  /** The highest rise over the background, grey levels. */
  peak: number;
  /** Pixels of the box whose share could not be read (glare nearly as bright as the face). */
  unknown: number;
}

/** The float's centre in the patch, or null when no pixel weighs. */
export function floatCentre(patch: FloatPatch): FloatCentre | null {
  const { image, background, width, spans, offset, sigma } = patch;
  const rise = (p: number) => image[p]! - background[p]! - offset;

  // The face's brightness: the median of the frame over the blob's upper half of rises.
  let peak = 0;
  for (let row = patch.row0; row < patch.row1; row++) {
    for (let col = Math.max(patch.col0, spans[2 * row]!); col < Math.min(patch.col1, spans[2 * row + 1]!); col++) {
      if (!patch.free(col, row)) continue;
      const r = rise(row * width + col);
      if (r > peak) peak = r;
    }
  }
  if (!(peak > 0)) return null;
  const bright: number[] = [];
  const rises: number[] = [];
  for (let row = patch.row0; row < patch.row1; row++) {
    for (let col = Math.max(patch.col0, spans[2 * row]!); col < Math.min(patch.col1, spans[2 * row + 1]!); col++) {
      if (!patch.free(col, row)) continue;
      const p = row * width + col;
      const r = rise(p);
      if (r >= 0.5 * peak) {
        bright.push(image[p]! - offset);
        rises.push(r);
      }
    }
  }
  const face = middle(bright);
  const meanRise = middle(rises);
  const readable = Math.max(minReadableRise, unknownBelowSigmas * sigma);
  const floor = (patch.floorSigmas * sigma) / Math.max(meanRise, 1e-9);

  let sum = 0;
  let sumX = 0;
  let sumY = 0;
  let unknown = 0;
  for (let row = patch.row0; row < patch.row1; row++) {
    for (let col = Math.max(patch.col0, spans[2 * row]!); col < Math.min(patch.col1, spans[2 * row + 1]!); col++) {
      if (!patch.free(col, row)) continue;
      const p = row * width + col;
      const full = face - background[p]!;
      if (full < readable) {
        unknown++;
        continue;
      }
      const w = rise(p) / full - floor;
      if (w <= 0) continue;
      sum += w;
      sumX += w * col;
      sumY += w * row;
    }
  }
  if (sum <= 0) return null;
  return { x: sumX / sum, y: sumY / sum, peak, unknown };
}

function middle(values: number[]): number {
  if (values.length === 0) return 0;
  values.sort((a, b) => a - b);
  const h = values.length >> 1;
  return values.length % 2 ? values[h]! : (values[h - 1]! + values[h]!) / 2;
}
