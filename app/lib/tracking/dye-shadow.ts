/**
 * A dye patch's coloured shadow on the bottom, found as a weaker, displaced copy of the patch and
 * taken out of the patch's signal before its centre is settled.
 *
 * Light that passes through the dye on its way to the bottom is coloured by it, so each lamp casts
 * on the bottom a copy of the patch's change of colour: displaced by the depth below the patch
 * times the tangent of the light's angle in the water, weaker by that lamp's share of the light
 * there, and blurred by the lamp's size (a small lamp's copy is sharp). Seen from above the copy
 * lies beside the patch; where the patch's long axis points at it, the copy's near end overlaps the
 * patch's tail and draws the centre towards it.
 *
 * Here, around a patch already centred: the dye is point-symmetric about its centre and a copy
 * beside it is not, so the candidates are the peaks of the signal's excess over its mirror image
 * through the centre (outside the patch's core, within a reach of it, above the noise of that
 * excess). From each, the displacement d climbs to the whole pixel where the patch's own signal
 * moved by d best matches that excess (least squares with the share α free: the patch's own tail
 * leaves no excess, so a copy over it is matched without it), then to a fraction of a pixel by a
 * parabola through the neighbours. The copy is kept only when it explains most of the excess where
 * it lies and its share is that of a copy (a real second patch of the same shape is as strong as
 * the first, or stronger, and is measured on its own).
 * The corrected signal is s(p) − α·s(p − d) for the pixels whose p − d falls in the patch's window:
 * for the copy's overlap with the patch's tail that is the copy itself, up to the copy of the copy
 * (α² at 2d, beyond the window).
 */
import { quickselect } from "simple-statistics";
import { bilinearAt } from "./dye-patch-signal";

export interface ShadowCopy {
  /** The copy's displacement from the patch, px. */
  dx: number;
  dy: number;
  /** Its strength as a share of the patch's. */
  share: number;
  /** The share of the excess where the copy lies that the copy explains. */
  explained: number;
}

export interface ShadowSearch {
  width: number;
  height: number;
  /** Per row, the half-open column range searched. */
  spans: Int32Array;
  /** The signal at pixel p less the water's level (0 for a clipped pixel). */
  value: (p: number) => number;
  /** The patch's centre and second moments (px, px²). */
  x: number;
  y: number;
  shape: readonly [number, number, number];
  /** The signal's noise width per pixel. */
  noise: number;
}

/** The patch's core, where no copy is looked for, in its standard deviations. */
const coreSigmas = 1.5;
/** The patch's extent that is copied, in its standard deviations (the centre's window). */
const copySigmas = 3.5;
/** How far from the patch's centre a copy is looked for: this many of its long axis's standard deviations, at most `maxReachPx`. */
const reachSigmas = 12;
const maxReachPx = 70;
/** Steps of a pixel the displacement may climb from the candidate's peak. */
const climbSteps = 10;
/** A copy is kept with a share in this range and explaining at least `minExplained` of the signal where it lies. */
const minShare = 0.05;
const maxShare = 0.8;
const minExplained = 0.5;
/** A candidate is climbed from only when the patch at its peak explains this share there. */
const startExplained = 0.3;
/** A candidate's peak (a mean of 3 × 3 grid points) must stand this many robust widths of such means above zero. */
const peakWidths = 4;
/** The candidates' grid, px. */
const gridPx = 4;
/** Fewest grid points round the patch to judge a copy by. */
const minSamples = 50;
/** Candidates tried, strongest first; copies kept (one per lamp that lights the bottom). */
const maxCandidates = 4;
const maxCopies = 2;
/** Copies closer than this (px) are one copy. */
const sameCopyPx = 8;

function inverseOf(shape: readonly [number, number, number]): [number, number, number] {
  const det = shape[0] * shape[2] - shape[1] * shape[1];
  return [shape[2] / det, -shape[1] / det, shape[0] / det];
}

/** The signal at a pixel (0 outside the searched spans) and between pixel centres (bilinear). */
function signalReader({ width, height, spans, value }: Pick<ShadowSearch, "width" | "height" | "spans" | "value">) {
  const at = (col: number, row: number) => (row >= 0 && row < height && col >= spans[2 * row]! && col < spans[2 * row + 1]! ? value(row * width + col) : 0);
  const bilinear = (sx: number, sy: number) => bilinearAt(at, sx, sy);
  return { at, bilinear };
}

/** The weaker displaced copies of the patch round it (at most `maxCopies`, strongest first); none when there are none to see. */
export function findShadowCopies(search: ShadowSearch): ShadowCopy[] {
  const { x, y, shape, noise } = search;
  const inv = inverseOf(shape);
  const q = (dx: number, dy: number) => inv[0] * dx * dx + 2 * inv[1] * dx * dy + inv[2] * dy * dy;
  const { at, bilinear } = signalReader(search);
  const longSigma = Math.sqrt(Math.max(shape[0], shape[2]) + Math.abs(shape[1]));
  const reach = Math.min(maxReachPx, reachSigmas * longSigma);

  // Candidates, on a grid of every 4th pixel each way (a copy is several pixels across): the
  // means of the excess over 3 × 3 grid points outside the core and within the reach that stand
  // above the noise and above their eight neighbours' means, strongest first. The mirror image is
  // read at the nearest pixel here (the centre rounded to half a pixel); the match below reads
  // between pixels.
  const mirrorX = Math.round(2 * x);
  const mirrorY = Math.round(2 * y);
  const steps = Math.ceil(reach / gridPx) + 1;
  const side = 2 * steps + 1;
  const gx0 = Math.round(x) - steps * gridPx;
  const gy0 = Math.round(y) - steps * gridPx;
  const excesses = new Float64Array(side * side);
  for (let j = 0; j < side; j++) {
    const row = gy0 + j * gridPx;
    for (let i = 0; i < side; i++) {
      const col = gx0 + i * gridPx;
      excesses[j * side + i] = at(col, row) - at(mirrorX - col, mirrorY - row);
    }
  }
  const means = new Float64Array(side * side).fill(-Infinity);
  /** The means' sizes, for their noise width: a copy holds a small part of the reach. */
  const sizes: number[] = [];
  for (let j = 1; j < side - 1; j++) {
    for (let i = 1; i < side - 1; i++) {
      const dx = gx0 + i * gridPx - x;
      const dy = gy0 + j * gridPx - y;
      if (dx * dx + dy * dy > reach * reach || q(dx, dy) < coreSigmas * coreSigmas) continue;
      const k = j * side + i;
      const m =
        (excesses[k - side - 1]! +
          excesses[k - side]! +
          excesses[k - side + 1]! +
          excesses[k - 1]! +
          excesses[k]! +
          excesses[k + 1]! +
          excesses[k + side - 1]! +
          excesses[k + side]! +
          excesses[k + side + 1]!) /
        9;
      means[k] = m;
      sizes.push(Math.abs(m));
    }
  }
  if (sizes.length < minSamples) return [];
  // The width of such a mean from the means themselves (MAD about zero): the frame's noise is
  // correlated between neighbours (JPEG's blocks, the blur), so it may be wider than a pixel's
  // width over 3.
  const middle = sizes.length >> 1;
  quickselect(sizes, middle, 0, sizes.length - 1);
  const floor = peakWidths * 1.4826 * Math.max(sizes[middle]!, (Math.SQRT2 * noise) / 3);
  const candidates: { col: number; row: number; mean: number }[] = [];
  for (let j = 1; j < side - 1; j++) {
    for (let i = 1; i < side - 1; i++) {
      const k = j * side + i;
      const m = means[k]!;
      if (!(m > floor)) continue;
      let top = true;
      for (let jj = -1; jj <= 1 && top; jj++) for (let ii = -1; ii <= 1; ii++) if ((ii || jj) && means[k + jj * side + ii]! > m) top = false;
      if (top) candidates.push({ col: gx0 + i * gridPx, row: gy0 + j * gridPx, mean: m });
    }
  }
  candidates.sort((a, b) => b.mean - a.mean);
  if (candidates.length === 0) return [];

  // The patch's pixels that are copied (its window round the centre), as offsets from the centre.
  const patch: { u: number; v: number; s: number }[] = [];
  const pr = Math.ceil(copySigmas * Math.sqrt(shape[2]));
  const pc = Math.ceil(copySigmas * Math.sqrt(shape[0]));
  for (let row = Math.floor(y) - pr; row <= Math.ceil(y) + pr; row++) {
    for (let col = Math.floor(x) - pc; col <= Math.ceil(x) + pc; col++) {
      if (q(col - x, row - y) > copySigmas * copySigmas) continue;
      const s = at(col, row);
      if (s !== 0) patch.push({ u: col - x, v: row - y, s });
    }
  }
  if (patch.length === 0) return [];

  /**
   * Least squares of the signal's excess over its mirror image against the patch moved by (dx, dy),
   * outside the patch's core: the patch's own tail, symmetric, leaves no excess to match.
   */
  function match(dx: number, dy: number): { score: number; share: number; energy: number } {
    let cross = 0;
    let template = 0;
    let energy = 0;
    for (const { u, v, s } of patch) {
      // Whole-pixel displacements from a centre between pixels: read between pixels.
      const c = x + dx + u;
      const r = y + dy + v;
      if (q(c - x, r - y) < coreSigmas * coreSigmas) continue;
      const e = bilinear(c, r) - bilinear(2 * x - c, 2 * y - r);
      cross += e * s;
      template += s * s;
      energy += e * e;
    }
    if (!(template > 0) || !(cross > 0)) return { score: 0, share: 0, energy };
    return { score: (cross * cross) / template, share: cross / template, energy };
  }

  /** The copy whose displacement is best matched near the candidate at (d0x, d0y), if it is one. */
  function copyNear(d0x: number, d0y: number): ShadowCopy | null {
    // Climb to the whole-pixel displacement that matches best: a candidate's peak is a noisy
    // maximum of the copy, some pixels off its displacement.
    const scores = new Map<number, number>();
    const scoreAt = (dx: number, dy: number): number => {
      const key = (dy + 512) * 1024 + (dx + 512);
      let v = scores.get(key);
      if (v === undefined) {
        v = match(dx, dy).score;
        scores.set(key, v);
      }
      return v;
    };
    let tx = d0x;
    let ty = d0y;
    // Noise that stands out by chance does not look like the patch even at its own peak: not climbed.
    const start = match(d0x, d0y);
    if (start.share < minShare || !(start.energy > 0) || start.score / start.energy < startExplained) return null;
    const climb = (): boolean => {
      for (let step = 0; ; step++) {
        let bx = tx;
        let by = ty;
        let best = scoreAt(tx, ty);
        for (let j = -1; j <= 1; j++) {
          for (let i = -1; i <= 1; i++) {
            const v = scoreAt(tx + i, ty + j);
            if (v > best) {
              best = v;
              bx = tx + i;
              by = ty + j;
            }
          }
        }
        if (bx === tx && by === ty) return true;
        // Too far from the candidate: not a copy of this patch there.
        if (step >= climbSteps) return false;
        tx = bx;
        ty = by;
      }
    };
    if (!climb()) return null;
    const ti = tx - d0x;
    const tj = ty - d0y;
    if (!(scoreAt(tx, ty) > 0)) return null;
    const s = (i: number, j: number) => scoreAt(tx + i, ty + j);
    const fraction = (minus: number, centre: number, plus: number) => {
      const curve = minus - 2 * centre + plus;
      return curve < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (minus - plus)) / curve)) : 0;
    };
    const fit = match(tx, ty);
    const explained = fit.energy > 0 ? fit.score / fit.energy : 0;
    if (fit.share < minShare || fit.share > maxShare || explained < minExplained) return null;
    return {
      dx: d0x + ti + fraction(s(-1, 0), s(0, 0), s(1, 0)),
      dy: d0y + tj + fraction(s(0, -1), s(0, 0), s(0, 1)),
      share: fit.share,
      explained,
    };
  }

  const copies: ShadowCopy[] = [];
  let tried = 0;
  for (const candidate of candidates) {
    const d0x = candidate.col - Math.round(x);
    const d0y = candidate.row - Math.round(y);
    // A candidate on a copy already found is one of that copy's noisy peaks.
    if (copies.some((c) => q(d0x - c.dx, d0y - c.dy) < copySigmas * copySigmas)) continue;
    const copy = copyNear(d0x, d0y);
    if (copy && !copies.some((c) => Math.hypot(c.dx - copy.dx, c.dy - copy.dy) < sameCopyPx)) copies.push(copy);
    if (copies.length === maxCopies || ++tried === maxCandidates) break;
  }
  return copies;
}

/**
 * The signal at pixel (col, row) with the copies taken out: s(p) − Σ α·s(p − d), s read bilinearly
 * at p − d, where p − d lies in the patch's window (`copySigmas` of its shape round its centre).
 */
export function withoutShadows(
  copies: readonly ShadowCopy[],
  search: Pick<ShadowSearch, "width" | "height" | "spans" | "value" | "x" | "y" | "shape">,
): (col: number, row: number) => number {
  const { x, y, shape } = search;
  const inv = inverseOf(shape);
  const { at, bilinear } = signalReader(search);
  return (col, row) => {
    let out = at(col, row);
    for (const copy of copies) {
      // The patch's point that the copy shows at this pixel.
      const sx = col - copy.dx;
      const sy = row - copy.dy;
      const ex = sx - x;
      const ey = sy - y;
      if (inv[0] * ex * ex + 2 * inv[1] * ex * ey + inv[2] * ey * ey > copySigmas * copySigmas) continue;
      out -= copy.share * bilinear(sx, sy);
    }
    return out;
  };
}
