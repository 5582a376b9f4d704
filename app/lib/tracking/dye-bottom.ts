/**
 * The bottom's level under the light, over the whole tank, from the stack's colour background:
 * what a dye patch darkens is the light that reaches the bottom and comes back through the dye,
 * not white light the background also holds on top of it (a lamp's glare on the water, still in
 * the view), which does not pass through the dye. The lamps light the bottom smoothly over the
 * tank, so its level is fitted as a quadratic surface over the image; glare only brightens, so the
 * fit leaves out, one-sided, what lies well above it, round after round. Dark grid lines and marks
 * the background holds lie under the surface and stay as they are. dye-centre.ts takes a
 * background brighter than the surface (plus its noise margin) as the surface's level.
 */
import { solveLinear } from "../linear-solve";

/** Quadratic in the image's coordinates about (x, y), scaled by `scale`: c0 + c1·u + c2·v + c3·u² + c4·u·v + c5·v². */
export interface BottomSurface {
  x: number;
  y: number;
  scale: number;
  c: Float64Array;
  /** Noise allowance above the surface, grey levels. */
  margin: number;
}

/** Rounds of fitting with the bright outliers left out. */
const rounds = 10;
/** Outliers lie this many robust widths above the surface; the margin is as many. */
const outlierWidths = 2.5;
/** The smallest robust width taken, grey levels (an exact, noiseless background). */
const minWidth = 1;
const terms = 6;

function basis(u: number, v: number, out: Float64Array): void {
  out[0] = 1;
  out[1] = u;
  out[2] = v;
  out[3] = u * u;
  out[4] = u * v;
  out[5] = v * v;
}

/** The surface's level at (col, row), without the margin. */
export function bottomLevel(s: BottomSurface, col: number, row: number): number {
  const u = (col - s.x) / s.scale;
  const v = (row - s.y) / s.scale;
  const c = s.c;
  return c[0]! + c[1]! * u + c[2]! * v + c[3]! * u * u + c[4]! * u * v + c[5]! * v * v;
}

/**
 * The surface fitted to the background's mean level over the channels, on every `stride`-th pixel
 * of every `stride`-th row inside `spans` (per row, the half-open column range searched); null
 * when too few pixels are searched.
 */
export function fitBottomSurface(background: Uint8Array, width: number, height: number, spans: Int32Array, stride: number): BottomSurface | null {
  const cols: number[] = [];
  const rows: number[] = [];
  const sampled: number[] = [];
  for (let row = 0; row < height; row += stride) {
    for (let col = spans[2 * row]!; col < spans[2 * row + 1]!; col += stride) {
      const q = 3 * (row * width + col);
      cols.push(col);
      rows.push(row);
      sampled.push((background[q]! + background[q + 1]! + background[q + 2]!) / 3);
    }
  }
  const count = sampled.length;
  if (count < 4 * terms) return null;
  const levels = Float64Array.from(sampled);
  const x = cols.reduce((s, v) => s + v, 0) / count;
  const y = rows.reduce((s, v) => s + v, 0) / count;
  const scale = Math.max(1, Math.max(width, height) / 2);
  // Each sample's scaled coordinates, as bottomLevel and basis work them out, once for all rounds.
  const us = Float64Array.from(cols, (col) => (col - x) / scale);
  const vs = Float64Array.from(rows, (row) => (row - y) / scale);
  const a = new Float64Array(terms * terms);
  const b = new Float64Array(terms);
  const f = new Float64Array(terms);
  const residuals = new Float64Array(count);
  // A start that lines and glare do not move: the median level, and the median distance from it.
  const median = middleValue(Float64Array.from(levels), count);
  for (let i = 0; i < count; i++) residuals[i] = Math.abs(levels[i]! - median);
  let c: Float64Array = Float64Array.of(median, 0, 0, 0, 0, 0);
  let limit = outlierWidths * Math.max(minWidth, 1.4826 * middleValue(residuals, count));
  let surface: BottomSurface = { x, y, scale, c, margin: limit };
  for (let round = 0; round <= rounds; round++) {
    a.fill(0);
    b.fill(0);
    let used = 0;
    for (let i = 0; i < count; i++) {
      const u = us[i]!;
      const v = vs[i]!;
      const level = levels[i]!;
      if (Math.abs(level - levelAt(c, u, v)) > limit) continue;
      basis(u, v, f);
      // The normal equations' matrix is symmetric (f[j]·f[k] and f[k]·f[j] are the same number):
      // its upper triangle is summed here, in the same order, and copied below.
      for (let j = 0; j < terms; j++) {
        const fj = f[j]!;
        b[j]! += fj * level;
        for (let k = j; k < terms; k++) a[j * terms + k]! += fj * f[k]!;
      }
      used++;
    }
    for (let j = 1; j < terms; j++) for (let k = 0; k < j; k++) a[j * terms + k] = a[k * terms + j]!;
    const solved = used < 4 * terms ? null : solveLinear(a, b, terms);
    if (!solved) break;
    // The robust width of the residuals below and near the surface: the median absolute residual
    // of the samples not left out, × 1.4826.
    let n = 0;
    for (let i = 0; i < count; i++) {
      const r = levels[i]! - levelAt(solved, us[i]!, vs[i]!);
      if (Math.abs(r) <= limit) residuals[n++] = Math.abs(r);
    }
    const width = Math.max(minWidth, 1.4826 * middleValue(residuals, n));
    limit = outlierWidths * width;
    c = solved;
    surface = { x, y, scale, c, margin: limit };
  }
  return surface;
}

/** bottomLevel at scaled coordinates (u, v), the same sum in the same order. */
function levelAt(c: Float64Array, u: number, v: number): number {
  return c[0]! + c[1]! * u + c[2]! * v + c[3]! * u * u + c[4]! * u * v + c[5]! * v * v;
}

/**
 * The value at index n >> 1 of the first n values once sorted (what `subarray(0, n).sort()[n >> 1]`
 * reads), found by selection (Hoare's), which reorders them but sorts none of them in full. NaN
 * for none, as the sorted empty array's missing value gives in the arithmetic it feeds.
 */
export function middleValue(values: Float64Array, n: number): number {
  if (n <= 0) return Number.NaN;
  const k = n >> 1;
  let lo = 0;
  let hi = n - 1;
  while (lo < hi) {
    const pivot = values[(lo + hi) >> 1]!;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (values[i]! < pivot) i++;
      while (values[j]! > pivot) j--;
      if (i <= j) {
        const t = values[i]!;
        values[i] = values[j]!;
        values[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return values[k]!;
  }
  return values[k]!;
}
