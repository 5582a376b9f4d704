/**
 * The detection image's threshold (detect.ts): the tracer's pixels marked in a mask, grouped into
 * regions of touching tiles that the OpenCV cleaning then works on.
 *
 * Floats: the difference from the background above a noise threshold, compared as block sums so
 * that no pixel needs a division. Dye against the stack's background: the block's change of colour
 * (dye-signal.ts, free of brightness) above a noise threshold, whatever its hue, marked by dye-marks.ts. Dye without a
 * background (fewer than 3 frames): the block's colour inside the plan's HSV range, value and
 * saturation checked before any hue is worked out.
 *
 * The search may be held to windows around where the tracers are expected (search-windows.ts),
 * in whole tiles. What it finds there is then exactly what the whole search would find there, as
 * long as no tile holding a find lies within two tiles of the windows' edge: such a tile and its
 * neighbours were searched in full, so its group of tiles, the region around it (two pixels past
 * the tiles) and the pixel beyond that which the 3 × 3 cleaning reads are the same either way.
 * Otherwise, for dye, the search widens by two tiles round each tile of such a group and runs again
 * (a dark mark on the turning table beside a window is such a group far more often than the patch
 * itself: Decision 82), up to `maxWidenings` times; after that, and at once for floats, the windows
 * are not trusted and the caller searches the whole frame.
 */
import { createColourMarker, createDyeMarker, markKept } from "./dye-marks";
import { createFloatMarker } from "./float-marks";
import type { CvRect } from "./opencv-types";
import type { DetectionPlan } from "./plan";

/** Side of the tiles that group the thresholded pixels, detection-image px. */
export const tileSize = 32;
const tileShift = 5;
/** Lowest contrast (grey levels) that counts, for nearly noiseless frames. */
const minContrast = 5;
/** Lowest change of colour against the background that counts for dye (2 %), likewise. */
export const minColourChange = 0.02;
/** How many times a windowed dye search may widen round finds near its edge before the caller searches the whole frame. */
const maxWidenings = 3;

/** A square of the frame to search: centre and half-side, full-frame px. */
export interface SearchWindow {
  x: number;
  y: number;
  reach: number;
}

export interface ThresholdImage {
  data: Uint8Array;
}

export interface Threshold {
  /**
   * Fills `mask` (the detection image, zeroed first) and returns the regions worth cleaning:
   * groups of touching tiles holding at least two neighbouring pixels above the threshold. Stray
   * noise pixels set no tile, so the OpenCV work stays near the tracer however large the tank
   * is. With `tiles` (from `windowTiles`) only those tiles are searched (for dye, widened round
   * finds near their edge), and null comes back if a find still lies too close to their edge to be
   * sure of it. For dye, `background` is the stack's
   * colour background (or null: the colour range alone), and `offset` and `sigma` describe the
   * change of colour (dye-signal.ts) over the tank.
   */
  run(mask: Uint8Array, image: ThresholdImage, background: Uint8Array | null, offset: number, sigma: number, tiles?: Uint8Array): CvRect[] | null;
  /** The tiles covering the windows (1 = search). */
  windowTiles(windows: readonly SearchWindow[]): Uint8Array;
}

/**
 * `smallSpans` holds, per detection-image row, the half-open column range inside the tank edge;
 * `detectSigmas` the threshold in noise units.
 */
export function createThreshold(plan: DetectionPlan, smallSpans: Int32Array, detectSigmas: number): Threshold {
  const { smallWidth: sw, smallHeight: sh, shrink: k } = plan;
  const block = k * k;
  const tilesX = Math.ceil(sw / tileSize);
  const tilesY = Math.ceil(sh / tileSize);
  const tileHits = new Uint8Array(tilesX * tilesY);
  const seen = new Uint8Array(tilesX * tilesY);
  const dye = plan.tracer === "dye";
  /** Dye against a background: the marks, with the background's terms made once per array (dye-marks.ts). */
  const dyeMarker = createDyeMarker(plan);
  /** A float against its background (float-marks.ts). */
  const floatMarker = createFloatMarker(plan);
  /** Dye without a background: its colour range (dye-marks.ts). */
  const colourMarker = createColourMarker(plan);
  /** Column ranges of one tile row to search, [from, to) pairs in detection-image px. */
  const runs = new Int32Array(tilesX + 1);

  /** The search columns of tile row `ty`, as pairs in `runs`; returns how many pairs. */
  function columnRuns(ty: number, tiles: Uint8Array | undefined): number {
    if (!tiles) {
      runs[0] = 0;
      runs[1] = sw;
      return 1;
    }
    let count = 0;
    const row = ty * tilesX;
    for (let tx = 0; tx < tilesX; tx++) {
      if (!tiles[row + tx]) continue;
      const start = tx;
      while (tx + 1 < tilesX && tiles[row + tx + 1]) tx++;
      runs[2 * count] = start * tileSize;
      runs[2 * count + 1] = Math.min(sw, (tx + 1) * tileSize);
      count++;
    }
    return count;
  }

  /** Whether every tile within two of `t` (in the grid) is searched. */
  function deepInside(t: number, tiles: Uint8Array): boolean {
    const tx = t % tilesX;
    const ty = (t / tilesX) | 0;
    for (let ny = Math.max(0, ty - 2); ny <= Math.min(tilesY - 1, ty + 2); ny++) {
      for (let nx = Math.max(0, tx - 2); nx <= Math.min(tilesX - 1, tx + 2); nx++) {
        if (!tiles[ny * tilesX + nx]) return false;
      }
    }
    return true;
  }

  /** Tiles a windowed pass found it must search too: those within two of a find near the edge. */
  const wanted = new Uint8Array(tilesX * tilesY);
  /** The tiles a windowed search covers, widened round such finds (reused from frame to frame). */
  const widened = new Uint8Array(tilesX * tilesY);

  /**
   * A widening round searches the union of its tiles afresh, but the same image against the same
   * background and level gives the tiles an earlier round searched the same verdicts: for dye,
   * the mask of the round before is kept (`marks`) and read back for the tiles in `judged` instead
   * of working their pixels out again (some half of a windowed search's pixels on the bench's stack).
   */
  const judged = new Uint8Array(tilesX * tilesY);
  const marks = new Uint8Array(dye ? sw * sh : 0);

  /** Marks every tile within two of `t` in `wanted`. */
  function want(t: number): void {
    const tx = t % tilesX;
    const ty = (t / tilesX) | 0;
    for (let ny = Math.max(0, ty - 2); ny <= Math.min(tilesY - 1, ty + 2); ny++) {
      wanted.fill(1, ny * tilesX + Math.max(0, tx - 2), ny * tilesX + Math.min(tilesX - 1, tx + 2) + 1);
    }
  }

  function run(mask: Uint8Array, image: ThresholdImage, background: Uint8Array | null, offset: number, sigma: number, tiles?: Uint8Array): CvRect[] | null {
    if (!tiles) return pass(mask, image, background, offset, sigma);
    // A find near the windows' edge widens the search round it, until its group of tiles lies deep inside.
    const searched = widened;
    searched.set(tiles);
    for (let round = 0, last = dye ? maxWidenings : 0; round <= last; round++) {
      wanted.fill(0);
      const regions = pass(mask, image, background, offset, sigma, searched, round > 0 ? judged : undefined);
      if (regions) return regions;
      if (round === last) break;
      // The tiles searched so far keep their marks for the next, wider round.
      judged.set(searched);
      marks.set(mask);
      for (let t = 0; t < searched.length; t++) searched[t] = searched[t]! | wanted[t]!;
    }
    return null;
  }

  /** Whether the pass has set a tile; a tile is set by two neighbouring marked pixels in a row: `previous` is the last one marked. */
  let any = false;
  let previous = -2;
  let mask: Uint8Array = new Uint8Array(0);

  /** Sets the tiles of the marks in mask [from, to) of the detection-image row starting at `rowAt`. */
  function note(from: number, to: number, rowAt: number, tileRow: number): void {
    const m = mask;
    for (let at = from; at < to; at++) {
      if (m[at] === 0) continue;
      if (previous === at - 1) {
        tileHits[tileRow + ((at - rowAt) >> tileShift)] = 1;
        any = true;
      }
      previous = at;
    }
  }

  /**
   * One threshold pass over `tiles` (or the whole frame); null, with `wanted` filled, if a find lies
   * too close to their edge. For dye, the tiles in `known` take their pixels' verdicts from `marks`.
   */
  function pass(
    into: Uint8Array,
    image: ThresholdImage,
    background: Uint8Array | null,
    offset: number,
    sigma: number,
    tiles?: Uint8Array,
    known?: Uint8Array,
  ): CvRect[] | null {
    mask = into;
    const m = into;
    const img = image.data;
    m.fill(0);
    tileHits.fill(0);
    any = false;
    previous = -2;
    const level = background && !dye ? (offset + Math.max(minContrast, (detectSigmas * sigma) / k)) * block : 0;
    // A block's mean change of colour has 1/k of a pixel's noise, and so has its offset (|s| is never negative).
    const changeLevel = background && dye ? Math.max(minColourChange, (offset + detectSigmas * sigma) / k) : 0;
    if (background && dye) dyeMarker.use(background);
    for (let sy = 0; sy < sh; sy++) {
      const a = smallSpans[2 * sy]!;
      const b = smallSpans[2 * sy + 1]!;
      if (a >= b) continue;
      const tileRow = (sy >> tileShift) * tilesX;
      const rowAt = sy * sw;
      const pairs = columnRuns(sy >> tileShift, tiles);
      for (let r = 0; r < pairs; r++) {
        const c0 = Math.max(a, runs[2 * r]!);
        const c1 = Math.min(b, runs[2 * r + 1]!);
        if (c0 >= c1) continue;
        if (background && dye) {
          // The change of colour against the background (of the block's mean at reduced resolution),
          // tile by tile: a tile an earlier round of this search judged takes its marks back.
          for (let s0 = c0; s0 < c1;) {
            const s1 = Math.min(c1, ((s0 >> tileShift) + 1) << tileShift);
            const marked =
              known !== undefined && known[tileRow + (s0 >> tileShift)] === 1
                ? markKept(marks, m, rowAt + s0, rowAt + s1)
                : dyeMarker.mark(img, m, sy, s0, s1, changeLevel);
            if (marked > 0) note(rowAt + s0, rowAt + s1, rowAt, tileRow);
            s0 = s1;
          }
        } else {
          const first = background ? floatMarker.mark(img, background, m, sy, c0, c1, level) : colourMarker.mark(img, m, sy, c0, c1);
          if (first >= 0) note(first, rowAt + c1, rowAt, tileRow);
        }
      }
    }
    if (!any) return [];
    const regions: CvRect[] = [];
    let short = false;
    seen.fill(0);
    for (let start = 0; start < tileHits.length; start++) {
      if (!tileHits[start] || seen[start]) continue;
      let tx0 = tilesX;
      let ty0 = tilesY;
      let tx1 = -1;
      let ty1 = -1;
      const queue = [start];
      seen[start] = 1;
      while (queue.length > 0) {
        const t = queue.pop() as number;
        if (tiles && !deepInside(t, tiles)) {
          if (!dye) return null;
          short = true;
          want(t);
        }
        const tx = t % tilesX;
        const ty = (t / tilesX) | 0;
        tx0 = Math.min(tx0, tx);
        tx1 = Math.max(tx1, tx);
        ty0 = Math.min(ty0, ty);
        ty1 = Math.max(ty1, ty);
        for (let dy = -1; dy <= 1; dy++) {
          for (let dx = -1; dx <= 1; dx++) {
            const nx = tx + dx;
            const ny = ty + dy;
            if (nx < 0 || ny < 0 || nx >= tilesX || ny >= tilesY) continue;
            const n = ny * tilesX + nx;
            if (tileHits[n] && !seen[n]) {
              seen[n] = 1;
              queue.push(n);
            }
          }
        }
      }
      // Two pixels past the tiles catch the tips of a blob whose body set them.
      const x = Math.max(0, tx0 * tileSize - 2);
      const y = Math.max(0, ty0 * tileSize - 2);
      const right = Math.min(sw, (tx1 + 1) * tileSize + 2);
      const bottom = Math.min(sh, (ty1 + 1) * tileSize + 2);
      regions.push({ x, y, width: right - x, height: bottom - y });
    }
    return short ? null : regions;
  }

  function windowTiles(windows: readonly SearchWindow[]): Uint8Array {
    const tiles = new Uint8Array(tilesX * tilesY);
    const span = tileSize * k;
    for (const w of windows) {
      // The window in crop px, then in tiles, with the two tiles of margin the check needs.
      const tx0 = Math.max(0, Math.floor((w.x - plan.crop.left - w.reach) / span) - 2);
      const tx1 = Math.min(tilesX - 1, Math.floor((w.x - plan.crop.left + w.reach) / span) + 2);
      const ty0 = Math.max(0, Math.floor((w.y - plan.crop.top - w.reach) / span) - 2);
      const ty1 = Math.min(tilesY - 1, Math.floor((w.y - plan.crop.top + w.reach) / span) + 2);
      for (let ty = ty0; ty <= ty1; ty++) tiles.fill(1, ty * tilesX + tx0, ty * tilesX + tx1 + 1);
    }
    return tiles;
  }

  return { run, windowTiles };
}
