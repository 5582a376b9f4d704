/**
 * Which way a dye patch changes the pixels it covers, the first step of its centre (dye-centre.ts):
 * its summed difference over the blob's box split into a change of colour (the part that sums to
 * zero over the channels) and of brightness, each part weighted by its share of the patch's signal
 * over what the background leaves unexplained in a ring round the box (the matched filter for
 * noise of unequal parts), and how far a pixel's brightness part may stray from what its colour
 * part says. The patch signal (dye-patch-signal.ts) is aimed accordingly.
 */
import { quickselect } from "simple-statistics";
import type { PatchSignal } from "./dye-patch-signal";

/** The ring around the box where the background's misfit is read is at least this wide, px. */
const ringMinPx = 4;
/** A pixel's brightness part counts within this many robust widths of what its colour part says. */
const slackWidths = 3;

/**
 * For frames of one size; `spans` holds, per row, the half-open column range searched. The
 * returned function aims `signal` at the patch in the box (crop px, half-open, already inside the
 * frame, with `signal` given its frame) and returns the patch's hue (unit length, components
 * summing to zero; the array is reused), or null when the box holds no change of colour.
 */
export function createDyeAim(width: number, height: number, spans: Int32Array, signal: PatchSignal) {
  /** The dye's direction of change, unit length. */
  const direction = new Float64Array(3);
  const change = new Float64Array(3);
  /** The patch's change of colour alone, unit length (its components sum to zero). */
  const hue = new Float64Array(3);
  /** Scratch: how far each ring pixel's brightness strays from its colour's (the first `ringCount` entries count). */
  const strays: number[] = [];

  /**
   * The value a sort of the first `count` strays would put at `count >> 1`, found by selection
   * (Floyd and Rivest, 1975, through simple-statistics) in linear time: the ring holds thousands
   * of pixels, and sorting them took more than any other step of a measurement.
   */
  function middleStray(count: number): number {
    const k = count >> 1;
    // quickselect reads a `right` of 0 as the array's end: with one stray there is nothing to select.
    if (count > 1) quickselect(strays, k, 0, count - 1);
    return strays[k]!;
  }

  return function aim(col0: number, row0: number, col1: number, row1: number): Float64Array | null {
    // The patch's summed difference over its box (dye-signal.ts), split into its change of colour
    // (the part that sums to zero over the channels) and its change of brightness.
    const sum = [0, 0, 0];
    for (let row = row0; row < row1; row++) {
      const a = Math.max(col0, spans[2 * row]!);
      const b = Math.min(col1, spans[2 * row + 1]!);
      for (let col = a; col < b; col++) {
        // A clipped pixel's colour is not the dye's.
        if (signal.clipped(col, row)) continue;
        signal.difference(row * width + col, change);
        sum[0]! += change[0]!;
        sum[1]! += change[1]!;
        sum[2]! += change[2]!;
      }
    }
    const brightness = (sum[0]! + sum[1]! + sum[2]!) / 3;
    const chroma = [sum[0]! - brightness, sum[1]! - brightness, sum[2]! - brightness];
    const chromaNorm = Math.hypot(chroma[0]!, chroma[1]!, chroma[2]!);
    if (!(chromaNorm > 0)) return null;
    for (let c = 0; c < 3; c++) hue[c] = chroma[c]! / chromaNorm;
    // What the background leaves around the patch, in each of the two parts: sensor noise in both,
    // and in brightness also whatever darkens or brightens all channels alike (grid lines and
    // shadows the background does not hold, glare). Each part then counts by its share of the
    // patch's signal over that mean square (the matched filter for noise of unequal parts): on a
    // plain view a dark dye's darkening counts in full, under glare and over moving lines only its
    // colour does.
    const ringX = Math.max(ringMinPx, (col1 - col0) >> 1);
    const ringY = Math.max(ringMinPx, (row1 - row0) >> 1);
    /** Each pixel of the ring round the box, inside the searched spans (`q` = 3 × its index). */
    // One pass over the ring: the mean squares of both parts, and (for brightSlack below) how far
    // each pixel's brightness part strays from what its colour part says.
    const brightPerColourHere = brightness / chromaNorm;
    let brightSquares = 0;
    let colourSquares = 0;
    let ringCount = 0;
    for (let row = Math.max(0, row0 - ringY); row < Math.min(height, row1 + ringY); row++) {
      const inRows = row >= row0 && row < row1;
      const a = Math.max(col0 - ringX, spans[2 * row]!);
      const b = Math.min(col1 + ringX, spans[2 * row + 1]!);
      for (let col = a; col < b; col++) {
        if (inRows && col >= col0 && col < col1) continue;
        signal.difference(row * width + col, change);
        const mean = (change[0]! + change[1]! + change[2]!) / 3;
        const along = change[0]! * hue[0]! + change[1]! * hue[1]! + change[2]! * hue[2]!;
        // Along (1, 1, 1)/√3 the brightness part is √3 × the mean; `hue` sums to zero, so `along` is the colour part.
        brightSquares += 3 * mean * mean;
        colourSquares += along * along;
        strays[ringCount++] = Math.abs(mean - brightPerColourHere * along);
      }
    }
    let brightWeight = 0;
    let colourWeight = 1;
    if (ringCount > 0 && colourSquares > 0 && brightSquares > 0) {
      brightWeight = (Math.sqrt(3) * brightness) / (brightSquares / ringCount);
      colourWeight = chromaNorm / (colourSquares / ringCount);
    }
    const unit = Math.sqrt(3);
    for (let c = 0; c < 3; c++) direction[c] = brightWeight / unit + colourWeight * hue[c]!;
    const norm = Math.hypot(direction[0]!, direction[1]!, direction[2]!);
    if (!(norm > 0)) return null;
    for (let c = 0; c < 3; c++) direction[c] = direction[c]! / norm;
    // The projection on `direction`, as brightness part m and colour part a: (w_b·√3·m + w_c·a) / norm.
    const brightCoefficient = (brightWeight * unit) / norm;
    const colourCoefficient = colourWeight / norm;
    // Seen through, the dye darkens in proportion to its change of colour (brightness/chromaNorm over
    // the box); white glare the background lacks adds to the brightness alone, a line or shadow it
    // lacks takes from it. So a pixel's brightness part counts only within the ring's noise of
    // what its colour part says: beyond that the pixel's brightness tells of something else.
    const brightSlack = ringCount > 0 ? slackWidths * 1.4826 * middleStray(ringCount) : Infinity;
    signal.aim(hue, brightCoefficient, colourCoefficient, brightPerColourHere, brightSlack);
    return hue;
  };
}
