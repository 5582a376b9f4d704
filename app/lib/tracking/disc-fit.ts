/**
 * A float's known disc fitted to one frame, for frames where its blob cannot place it: part of
 * the face lies on a lamp's glare as bright as itself, so the share-of-pixel centroid
 * (float-centre.ts) sees only the part against darker water and is biased towards it.
 *
 * Model: I = B + a(p)·(F − B), B the frame's background, F the face's level, a(p) the disc's share
 * of pixel p: a logistic step across the edge, a = 1 / (1 + exp((d − R)/k)), d the pixel
 * centre's distance from the disc's centre and k = 0.33 px (a spread of 0.6 px: the pixel's
 * own width, √(1/12), with the half-pixel blur of a camera's optics, common practice). Least squares,
 * Gauss–Newton in the centre (and F, and R when asked), each pixel weighing 1/σ² (Huber-weighted
 * beyond 3σ so a grid line the background holds slightly off does not pull the fit). A pixel
 * whose background is as bright as the face adds nothing: the model does not move with the
 * centre there. A pixel darker than its background by more than 3σ (the float's shadow, a line
 * the float does not cover) is read as the background itself (a = 0). The centre's uncertainty
 * is the Fisher matrix's inverse scaled by the residual's variance (Gauss–Newton's covariance,
 * e.g. Press et al. 2007, Numerical Recipes, §15.5).
 */
import { invertMatrix, solveLinear } from "../linear-solve";

export interface DiscFitInput {
  /** One channel, row-major, `width` × `height`. */
  image: Uint8Array;
  background: Uint8Array;
  width: number;
  height: number;
  /** Where to start, px (pixel centres on integers). */
  x: number;
  y: number;
  /** The disc's radius, px; fitted too when `fitRadius`. */
  radius: number;
  /** The face's level to start from, grey levels. */
  face: number;
  /** How far from (x, y) the centre may be looked for, px. */
  reach: number;
  fitRadius?: boolean;
  /** Whether a pixel may count (inside the tank). */
  inside?: (col: number, row: number) => boolean;
}

export interface DiscFit {
  x: number;
  y: number;
  radius: number;
  face: number;
  /** One standard deviation of x and y, px. */
  sdX: number;
  sdY: number;
  /** Residual RMS over the pixels the disc's edge or face touches, and the frame's noise around it, grey levels. */
  residualRms: number;
  noise: number;
  /** Pixels that counted. */
  pixels: number;
  /** The face's mean rise over the background it covers, grey levels. */
  contrast: number;
}

const edgeScale = 0.33;
const huberSigmas = 3;
const shadowSigmas = 3;
const maxIterations = 30;
const settledPx = 1e-3;

interface Pixel {
  col: number;
  row: number;
  b: number;
  obs: number;
}

function share(d: number, r: number): number {
  return 1 / (1 + Math.exp((d - r) / edgeScale));
}

/** Every this many rows and columns the frame's noise is read. */
const noiseStride = 4;

/**
 * The frame's noise about its background over the whole frame (every fourth row and column):
 * 1.4826 × the median absolute deviation. Read near the disc instead, glare the background does
 * not hold inflated it and let such a fit pass as noise.
 */
function frameNoise(input: DiscFitInput): number {
  const { image, background, width, height } = input;
  const hist = new Uint32Array(511);
  let count = 0;
  for (let row = 0; row < height; row += noiseStride) {
    for (let col = 0; col < width; col += noiseStride) {
      if (input.inside && !input.inside(col, row)) continue;
      const p = row * width + col;
      hist[image[p]! - background[p]! + 255]!++;
      count++;
    }
  }
  if (count < 20) return 3;
  const at = (share: number): number => {
    let seen = 0;
    for (let v = 0; v < hist.length; v++) {
      seen += hist[v]!;
      if (seen > share * count) return v - 255;
    }
    return 255;
  };
  const med = at(0.5);
  const dev = new Uint32Array(256);
  for (let v = 0; v < hist.length; v++) dev[Math.abs(v - 255 - med)] = dev[Math.abs(v - 255 - med)]! + hist[v]!;
  let seen = 0;
  for (let v = 0; v < dev.length; v++) {
    seen += dev[v]!;
    if (seen > 0.5 * count) return Math.max(1, 1.4826 * v);
  }
  return 3;
}

/** The disc fitted near (x, y), or null when there are too few pixels or the fit does not settle. */
export function fitDisc(input: DiscFitInput): DiscFit | null {
  const { image, background, width, height, reach } = input;
  const margin = 3;
  const noise = frameNoise(input);
  const half = input.radius + reach + margin + 1;
  const pixels: Pixel[] = [];
  for (let row = Math.max(0, Math.floor(input.y - half)); row <= Math.min(height - 1, Math.ceil(input.y + half)); row++) {
    for (let col = Math.max(0, Math.floor(input.x - half)); col <= Math.min(width - 1, Math.ceil(input.x + half)); col++) {
      if (input.inside && !input.inside(col, row)) continue;
      const p = row * width + col;
      const b = background[p]!;
      const i = image[p]!;
      pixels.push({ col, row, b, obs: i < b - shadowSigmas * noise ? b : i });
    }
  }
  if (pixels.length < 30) return null;

  const sse = (cx: number, cy: number, r: number, f: number): number => {
    let sum = 0;
    const reachSq = (r + margin) * (r + margin);
    for (const q of pixels) {
      const dx = q.col - cx;
      const dy = q.row - cy;
      const d2 = dx * dx + dy * dy;
      if (d2 > reachSq) continue;
      const pred = q.b + share(Math.sqrt(d2), r) * (f - q.b);
      const e = Math.abs(q.obs - Math.min(255, pred));
      const c = huberSigmas * noise;
      sum += e <= c ? e * e : c * (2 * e - c);
    }
    return sum;
  };

  // A coarse look over the reach (1 px steps) so Gauss–Newton starts within a pixel.
  let cx = input.x;
  let cy = input.y;
  let best = Infinity;
  const steps = Math.ceil(reach);
  for (let j = -steps; j <= steps; j++) {
    for (let i = -steps; i <= steps; i++) {
      if (i * i + j * j > reach * reach) continue;
      const s = sse(input.x + i, input.y + j, input.radius, input.face);
      if (s < best) {
        best = s;
        cx = input.x + i;
        cy = input.y + j;
      }
    }
  }

  let r = input.radius;
  let f = input.face;
  const n = input.fitRadius ? 4 : 3;
  const a = new Float64Array(n * n);
  const g = new Float64Array(n);
  const jac = new Float64Array(n);
  let settled = false;
  let pinned = false;
  let counted = 0;
  let weightedSq = 0;
  for (let it = 0; it < maxIterations; it++) {
    a.fill(0);
    g.fill(0);
    counted = 0;
    weightedSq = 0;
    const reachSq = (r + margin) * (r + margin);
    for (const q of pixels) {
      const dx = q.col - cx;
      const dy = q.row - cy;
      const d2 = dx * dx + dy * dy;
      if (d2 > reachSq) continue;
      const d = Math.max(1e-6, Math.sqrt(d2));
      const s = share(d, r);
      const contrast = f - q.b;
      const pred = q.b + s * contrast;
      // A prediction above white is white: no slope there.
      const clipped = pred > 255;
      const e = q.obs - (clipped ? 255 : pred);
      const slope = clipped ? 0 : (s * (1 - s)) / edgeScale; // ∂a/∂R = −∂a/∂d
      jac[0] = clipped ? 0 : contrast * slope * (dx / d);
      jac[1] = clipped ? 0 : contrast * slope * (dy / d);
      jac[2] = clipped ? 0 : s;
      if (n === 4) jac[3] = contrast * slope;
      const c = huberSigmas * noise;
      const w = Math.abs(e) <= c ? 1 : c / Math.abs(e);
      for (let u = 0; u < n; u++) {
        g[u] = g[u]! + w * jac[u]! * e;
        for (let v = 0; v < n; v++) a[u * n + v] = a[u * n + v]! + w * jac[u]! * jac[v]!;
      }
      counted++;
      weightedSq += w * e * e;
    }
    // A face at white stays at white: the camera shows nothing brighter, so F is held there
    // unless the pixels ask for a darker face.
    if (pinned && g[2]! < 0) pinned = false;
    let step = pinned ? null : solveLinear(a, g, n);
    if (step && f + step[2]! > 255) {
      pinned = true;
      step = null;
    }
    if (pinned) {
      f = 255;
      const reduced = withoutFace(a, g, n);
      const part = solveLinear(reduced.a, reduced.g, n - 1);
      step = part && Float64Array.from([part[0]!, part[1]!, 0, ...(n === 4 ? [part[2]!] : [])]);
    }
    if (!step) return null;
    cx += step[0]!;
    cy += step[1]!;
    f += step[2]!;
    if (n === 4) r += step[3]!;
    if (Math.hypot(cx - input.x, cy - input.y) > reach + 1 || !(r > 1)) return null;
    if (Math.hypot(step[0]!, step[1]!) < settledPx && (n === 3 || Math.abs(step[3]!) < settledPx)) {
      settled = true;
      break;
    }
  }
  if (!settled || counted <= n) return null;
  let covered = 0;
  let rise = 0;
  for (const q of pixels) {
    const s = share(Math.hypot(q.col - cx, q.row - cy), r);
    covered += s;
    rise += s * (f - q.b);
  }
  const free = pinned ? n - 1 : n;
  const inverse = pinned ? invertMatrix(withoutFace(a, g, n).a, free) : invertMatrix(a, n);
  if (!inverse) return null;
  const variance = weightedSq / (counted - free);
  return {
    x: cx,
    y: cy,
    radius: r,
    face: f,
    sdX: Math.sqrt(Math.max(0, inverse[0]! * variance)),
    sdY: Math.sqrt(Math.max(0, inverse[free + 1]! * variance)),
    residualRms: Math.sqrt(variance),
    noise,
    pixels: counted,
    contrast: covered > 0 ? rise / covered : 0,
  };
}

/** The normal equations with the face's row and column (index 2) taken out. */
function withoutFace(a: Float64Array, g: Float64Array, n: number): { a: Float64Array; g: Float64Array } {
  const keep = Array.from({ length: n }, (_, i) => i).filter((i) => i !== 2);
  const m = keep.length;
  const ra = new Float64Array(m * m);
  const rg = new Float64Array(m);
  keep.forEach((u, i) => {
    rg[i] = g[u]!;
    keep.forEach((v, j) => {
      ra[i * m + j] = a[u * n + v]!;
    });
  });
  return { a: ra, g: rg };
}
