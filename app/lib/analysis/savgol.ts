/**
 * Savitzky–Golay smoothing and derivatives (Savitzky & Golay 1964, Anal. Chem. 36, 1627).
 *
 * Coefficients come from the least-squares polynomial fit itself, not from printed tables, so any
 * odd window and order work. Tracks are smoothed by fitting the local polynomial on each
 * window's actual frame times: on evenly spaced frames that is exactly the classical filter, and a
 * dropped frame or an uneven frame clock then costs nothing but a slightly wider window, with no
 * resampling that would invent positions. A window that spans a long gap is refused, so no
 * estimate ever bridges a lost stretch of track.
 */
import { median } from "simple-statistics";
import type { TimedPoint } from "./frames";
import { qrFactorise } from "./regression";

function factorial(k: number): number {
  let f = 1;
  for (let i = 2; i <= k; i++) f *= i;
  return f;
}

function checkWindow(window: number, polyOrder: number): void {
  if (!Number.isInteger(window) || window < 3 || window % 2 === 0) {
    throw new RangeError(`the window must be an odd whole number of at least 3 frames (got ${window})`);
  }
  if (!Number.isInteger(polyOrder) || polyOrder < 0 || polyOrder >= window) {
    throw new RangeError(`the polynomial order must be a whole number below the window (got ${polyOrder})`);
  }
}

/**
 * Convolution weights for the centre point of a window of unit-spaced samples: the estimate of the
 * derivative-th derivative is Σ cₖ yₖ (divide by Δt^derivative for time steps Δt).
 */
export function savitzkyGolayCoefficients(window: number, polyOrder: number, derivative = 0): number[] {
  checkWindow(window, polyOrder);
  if (!Number.isInteger(derivative) || derivative < 0 || derivative > polyOrder) {
    throw new RangeError(`the derivative order must be between 0 and the polynomial order (got ${derivative})`);
  }
  const half = (window - 1) / 2;
  const design: number[][] = [];
  for (let k = -half; k <= half; k++) {
    const row: number[] = [];
    for (let j = 0; j <= polyOrder; j++) row.push(k ** j);
    design.push(row);
  }
  const qr = qrFactorise(design);
  // The weight of sample k is the derivative-th coefficient of the fit to the unit impulse at k.
  const scale = factorial(derivative);
  return design.map((_, k) => {
    const impulse = design.map((__, i) => (i === k ? 1 : 0));
    return qr.solve(impulse)[derivative]! * scale;
  });
}

/** Default polynomial order: at order 4 the velocity filter is exact for quartics and the
 * acceleration filter for quintics, so both keep their gain on a circle and f = a/v stays nearly
 * unbiased; orders 2 and 3 mix filters of unequal accuracy and bias f by per cents. */
export const DEFAULT_POLY_ORDER = 4;

/** Window as a fraction of the expected inertial period: long enough to beat noise, short enough
 * that the order-4 filter biases f by less than 0.1% (tested on fast circles). */
export const WINDOW_FRACTION_OF_PERIOD = 0.3;

export const MAX_WINDOW = 101;

/** Fewest frames per inertial period at which the shortest window keeps the bias of f below 0.5%. */
export const MIN_FRAMES_PER_PERIOD = 14;

/** Shortest window that still smooths (two more points than the polynomial needs). */
export function minimumWindow(polyOrder: number): number {
  const w = polyOrder + 3;
  return w % 2 === 0 ? w + 1 : w;
}

/** Round to an odd whole number, upwards. */
export function oddWindow(n: number): number {
  const w = Math.max(3, Math.round(n));
  return w % 2 === 0 ? w + 1 : w;
}

export interface WindowChoice {
  /** s, the typical interval between frames */
  frameInterval: number;
  /** s, the inertial period expected from the rate in force, π/|Ω| */
  inertialPeriod: number;
  polyOrder?: number;
  /** Number of points in the track: the window never takes more than a third of it. */
  nPoints?: number;
}

/**
 * Window (odd, in frames) spanning about 0.3 of the expected inertial period, bounded below by
 * the shortest useful window and above by 101 frames and a third of the track.
 */
export function chooseWindow(choice: WindowChoice): number {
  const polyOrder = choice.polyOrder ?? DEFAULT_POLY_ORDER;
  const lower = minimumWindow(polyOrder);
  const framesPerPeriod = choice.inertialPeriod / choice.frameInterval;
  let w = Number.isFinite(framesPerPeriod) && framesPerPeriod > 0 ? oddWindow(WINDOW_FRACTION_OF_PERIOD * framesPerPeriod) : lower;
  w = Math.min(w, MAX_WINDOW);
  if (choice.nPoints !== undefined) {
    const third = Math.floor(choice.nPoints / 3);
    w = Math.min(w, third % 2 === 0 ? third - 1 : third);
  }
  return Math.max(w, lower);
}

/** Median of the positive intervals between successive times (times sorted). */
export function typicalFrameInterval(times: readonly number[]): number {
  const d: number[] = [];
  for (let i = 1; i < times.length; i++) {
    const dt = times[i]! - times[i - 1]!;
    if (dt > 0) d.push(dt);
  }
  return d.length === 0 ? Number.NaN : median(d);
}

export interface SmoothingWeights {
  /** index in the track of the window's first point */
  first: number;
  /** s, time of each window point less the centre's time */
  offsets: Float64Array;
  /** estimate = Σ weight[k] · value[first + k] for position, velocity and acceleration */
  position: Float64Array;
  velocity: Float64Array;
  acceleration: Float64Array;
}

export interface SmoothedSample {
  /** index of the window's centre in the input track */
  index: number;
  t: number;
  /** smoothed position */
  x: number;
  y: number;
  /** velocity */
  u: number;
  v: number;
  /** acceleration */
  ax: number;
  ay: number;
  /** The linear weights behind the estimates, for propagating tracking noise into a fit. */
  weights: SmoothingWeights;
}

export interface SmoothingOptions {
  window: number;
  polyOrder?: number;
  /** A window may span at most this many times its nominal span (window − 1 frame intervals). */
  maxSpanFactor?: number;
  /** s; defaults to the median frame interval of the track */
  frameInterval?: number;
}

type WindowWeights = Omit<SmoothingWeights, "first">;

/** Local polynomial weights for one window: the first three rows of (AᵀA)⁻¹Aᵀ, in time units. */
function windowWeights(offsets: readonly number[], h: number, cols: number): WindowWeights | null {
  // Offsets scaled by the nominal half-span keep the local Vandermonde matrix well conditioned.
  const design = offsets.map((o) => {
    const tau = o / h;
    const row = [1];
    for (let j = 1; j < cols; j++) row.push(row[j - 1]! * tau);
    return row;
  });
  let inverse: number[][];
  try {
    inverse = qrFactorise(design).inverseNormal();
  } catch {
    return null;
  }
  const m = offsets.length;
  const position = new Float64Array(m);
  const velocity = new Float64Array(m);
  const acceleration = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const row = design[k]!;
    let w0 = 0;
    let w1 = 0;
    let w2 = 0;
    for (let j = 0; j < cols; j++) {
      w0 += inverse[0]![j]! * row[j]!;
      w1 += inverse[1]![j]! * row[j]!;
      w2 += inverse[2]![j]! * row[j]!;
    }
    position[k] = w0;
    velocity[k] = w1 / h;
    acceleration[k] = (2 * w2) / (h * h);
  }
  return { offsets: Float64Array.from(offsets), position, velocity, acceleration };
}

/**
 * Smoothed position, velocity and acceleration at the centre of each full window of consecutive
 * points (times strictly increasing). Windows whose time span exceeds maxSpanFactor (default
 * 1.25) times the nominal span are skipped: a short gap of a frame or two passes, a lost stretch
 * does not. The first and last half-window of points get no estimate, because off-centre
 * derivative estimates are noisier and biased.
 */
export function smoothTrack(points: readonly TimedPoint[], options: SmoothingOptions): SmoothedSample[] {
  const polyOrder = options.polyOrder ?? DEFAULT_POLY_ORDER;
  const window = options.window;
  checkWindow(window, polyOrder);
  if (polyOrder < 2) throw new RangeError("the acceleration needs a polynomial order of at least 2");
  const n = points.length;
  const half = (window - 1) / 2;
  const out: SmoothedSample[] = [];
  if (n < window) return out;
  const dt = options.frameInterval ?? typicalFrameInterval(points.map((p) => p.t));
  if (!(dt > 0)) return out;
  const maxSpan = (options.maxSpanFactor ?? 1.25) * (window - 1) * dt;
  const h = half * dt;
  const cols = polyOrder + 1;
  // Weights depend only on the window's time offsets: evenly spaced windows share one set.
  let evenWeights: WindowWeights | null = null;
  for (let i = half; i < n - half; i++) {
    const first = points[i - half]!;
    const last = points[i + half]!;
    if (last.t - first.t > maxSpan + 1e-9 * dt) continue;
    const tc = points[i]!.t;
    let even = true;
    for (let k = -half; k <= half && even; k++) {
      if (Math.abs(points[i + k]!.t - tc - k * dt) > 1e-6 * dt) even = false;
    }
    let w: WindowWeights | null;
    if (even) {
      evenWeights ??= windowWeights(
        Array.from({ length: window }, (_, k) => (k - half) * dt),
        h,
        cols,
      );
      w = evenWeights;
    } else {
      w = windowWeights(
        Array.from({ length: window }, (_, k) => points[i - half + k]!.t - tc),
        h,
        cols,
      );
    }
    if (!w) continue;
    let x = 0;
    let y = 0;
    let u = 0;
    let v = 0;
    let ax = 0;
    let ay = 0;
    for (let k = 0; k < window; k++) {
      const p = points[i - half + k]!;
      const w0 = w.position[k]!;
      const w1 = w.velocity[k]!;
      const w2 = w.acceleration[k]!;
      x += w0 * p.x;
      y += w0 * p.y;
      u += w1 * p.x;
      v += w1 * p.y;
      ax += w2 * p.x;
      ay += w2 * p.y;
    }
    out.push({ index: i, t: tc, x, y, u, v, ax, ay, weights: { first: i - half, ...w } });
  }
  return out;
}

/**
 * Tracking noise per axis (same unit as the positions), from how far the raw positions sit off
 * their smoothed values: E[(x − x̂)²] = σ²(1 − wₖₖ) for a least-squares smoother, wₖₖ the weight
 * of the point on itself.
 */
export function positionNoise(points: readonly TimedPoint[], samples: readonly SmoothedSample[]): number {
  let ss = 0;
  let dof = 0;
  for (const s of samples) {
    const p = points[s.index]!;
    const self = s.weights.position[s.index - s.weights.first]!;
    ss += (p.x - s.x) ** 2 + (p.y - s.y) ** 2;
    dof += 2 * (1 - self);
  }
  return dof > 0 ? Math.sqrt(ss / dof) : Number.NaN;
}
