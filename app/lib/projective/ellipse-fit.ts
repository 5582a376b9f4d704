/**
 * The ellipse through five or more image points: the direct least-squares fit of Fitzgibbon,
 * Pilu & Fisher (1999), which minimises the algebraic distance under the constraint 4ac − b² = 1
 * and so always returns an ellipse, in the numerically stable form of Halíř & Flusser (1998):
 * the scatter matrix split into its quadratic and linear parts, the linear part eliminated, and the
 * 3 × 3 eigenproblem solved. The points are centred and scaled first (Hartley 1997's advice for
 * the same reason) and the conic is carried back to pixels.
 */
import type { Point } from "../geometry";
import { GeometryError } from "./geometry-error";
import { addMatrices, invert, mat3, multiply, outer, transpose, type Mat3, type Vec3 } from "./matrix";

export interface Ellipse {
  /** the conic a x² + b xy + c y² + d x + e y + f = 0 as its symmetric matrix, in the points' units */
  conic: Mat3;
  centre: Point;
  /** semi-axes, major first */
  a: number;
  b: number;
  /** the major axis's angle from +x (in the points' axes), radians in (−π/2, π/2] */
  angle: number;
  /** root-mean-square distance of the points from the ellipse (first-order: |Q| / |∇Q|) */
  rmsResidual: number;
}

/** The real roots of λ³ + p λ² + q λ + r = 0. */
function cubicRoots(p: number, q: number, r: number): number[] {
  const shift = p / 3;
  const a = q - (p * p) / 3;
  const b = (2 * p * p * p) / 27 - (p * q) / 3 + r;
  const disc = (b * b) / 4 + (a * a * a) / 27;
  if (disc > 0) {
    const s = Math.sqrt(disc);
    return [Math.cbrt(-b / 2 + s) + Math.cbrt(-b / 2 - s) - shift];
  }
  const m = 2 * Math.sqrt(Math.max(0, -a / 3));
  const arg = m === 0 ? 0 : Math.max(-1, Math.min(1, (3 * b) / (a * m)));
  const theta = Math.acos(arg) / 3;
  return [0, 1, 2].map((k) => m * Math.cos(theta - (2 * Math.PI * k) / 3) - shift);
}

/** A vector spanning the null space of the (nearly) singular 3 × 3 matrix m: the longest cross product of two of its rows. */
function nullVector(m: Mat3): Vec3 {
  const cross = (u: Vec3, v: Vec3): Vec3 => [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
  const candidates = [cross(m[0], m[1]), cross(m[0], m[2]), cross(m[1], m[2])];
  return candidates.reduce((best, c) => (Math.hypot(...c) > Math.hypot(...best) ? c : best));
}

/** The centre, semi-axes and angle of the ellipse a conic matrix describes, or null when it is not a real ellipse. */
export function ellipseOfConic(conic: Mat3): Omit<Ellipse, "rmsResidual"> | null {
  const A = conic[0][0];
  const B = 2 * conic[0][1];
  const C = conic[1][1];
  const D = 2 * conic[0][2];
  const E = 2 * conic[1][2];
  const F = conic[2][2];
  const det2 = 4 * A * C - B * B;
  if (!(det2 > 0)) return null;
  const x0 = (B * E - 2 * C * D) / det2;
  const y0 = (B * D - 2 * A * E) / det2;
  const f0 = A * x0 * x0 + B * x0 * y0 + C * y0 * y0 + D * x0 + E * y0 + F;
  // Eigenvalues of [[A, B/2], [B/2, C]].
  const mean = (A + C) / 2;
  const spread = Math.hypot((A - C) / 2, B / 2);
  const small = mean - spread;
  const large = mean + spread;
  const major = Math.sqrt(-f0 / small);
  const minor = Math.sqrt(-f0 / large);
  if (!Number.isFinite(major) || !Number.isFinite(minor) || !(minor > 0)) return null;
  // The major axis lies along the eigenvector of the smaller eigenvalue.
  let angle = Math.abs(B) < 1e-300 && A <= C ? 0 : Math.atan2(small - A, B / 2);
  if (Math.abs(B) < 1e-300 && A > C) angle = Math.PI / 2;
  if (angle > Math.PI / 2) angle -= Math.PI;
  if (angle <= -Math.PI / 2) angle += Math.PI;
  return { conic, centre: { x: x0, y: y0 }, a: major, b: minor, angle };
}

export function fitEllipse(points: readonly Point[]): Ellipse {
  if (points.length < 5)
    throw new GeometryError(`An ellipse needs at least five points on the rim; ${points.length} ${points.length === 1 ? "was" : "were"} given.`);
  if (points.some((p) => !Number.isFinite(p.x) || !Number.isFinite(p.y))) throw new GeometryError("Every rim point needs a column and a row in pixels.");
  const n = points.length;
  const mx = points.reduce((s, p) => s + p.x, 0) / n;
  const my = points.reduce((s, p) => s + p.y, 0) / n;
  const spread = Math.sqrt(points.reduce((s, p) => s + (p.x - mx) ** 2 + (p.y - my) ** 2, 0) / n);
  if (!(spread > 0)) throw new GeometryError("The rim points all sit on one spot; mark them around the rim.");
  const u = points.map((p) => ({ x: (p.x - mx) / spread, y: (p.y - my) / spread }));
  // Points in a line (or nearly): the smaller principal spread is tiny against the larger.
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (const p of u) {
    sxx += p.x * p.x;
    sxy += p.x * p.y;
    syy += p.y * p.y;
  }
  const half = Math.hypot((sxx - syy) / 2, sxy);
  if ((sxx + syy) / 2 - half < 1e-8 * ((sxx + syy) / 2 + half)) throw new GeometryError("The rim points lie in a line; mark them around the rim.");
  // The scatter matrix split into its quadratic (x², xy, y²) and linear (x, y, 1) blocks.
  let S1: Mat3 = mat3([]);
  let S2: Mat3 = mat3([]);
  let S3: Mat3 = mat3([]);
  for (const p of u) {
    const q: Vec3 = [p.x * p.x, p.x * p.y, p.y * p.y];
    const l: Vec3 = [p.x, p.y, 1];
    S1 = addMatrices(S1, outer(q, q));
    S2 = addMatrices(S2, outer(q, l));
    S3 = addMatrices(S3, outer(l, l));
  }
  const S3inv = invert(S3);
  if (!S3inv) throw new GeometryError("The rim points lie in a line; mark them around the rim.");
  // T = −S3⁻¹ S2ᵀ; the reduced scatter M = S1 + S2 T, then premultiplied by C1⁻¹ (Halíř & Flusser 1998, eq. 29).
  const T = multiply(S3inv, transpose(S2)).map((row) => row.map((x) => -x)) as Mat3;
  const M = multiply(S2, T).map((row, i) => row.map((x, j) => x + S1[i]![j]!)) as Mat3;
  const Mc: Mat3 = [M[2].map((x) => x / 2) as Vec3, M[1].map((x) => -x) as Vec3, M[0].map((x) => x / 2) as Vec3];
  const tr = Mc[0][0] + Mc[1][1] + Mc[2][2];
  const minors = Mc[0][0] * Mc[1][1] - Mc[0][1] * Mc[1][0] + Mc[0][0] * Mc[2][2] - Mc[0][2] * Mc[2][0] + Mc[1][1] * Mc[2][2] - Mc[1][2] * Mc[2][1];
  const det =
    Mc[0][0] * (Mc[1][1] * Mc[2][2] - Mc[1][2] * Mc[2][1]) -
    Mc[0][1] * (Mc[1][0] * Mc[2][2] - Mc[1][2] * Mc[2][0]) +
    Mc[0][2] * (Mc[1][0] * Mc[2][1] - Mc[1][1] * Mc[2][0]);
  let best: Vec3 | null = null;
  for (const lambda of cubicRoots(-tr, minors, -det)) {
    const shifted = Mc.map((row, i) => row.map((x, j) => (i === j ? x - lambda : x))) as Mat3;
    const v = nullVector(shifted);
    const len = Math.hypot(...v);
    if (!(len > 0)) continue;
    const a1 = v.map((x) => x / len) as Vec3;
    if (4 * a1[0] * a1[2] - a1[1] * a1[1] > 0 && (best === null || 4 * a1[0] * a1[2] - a1[1] ** 2 > 4 * best[0] * best[2] - best[1] ** 2)) best = a1;
  }
  if (!best) throw new GeometryError("The rim points do not lie on an ellipse; check that each sits on the rim.");
  const a2 = [0, 1, 2].map((i) => T[i]![0] * best[0] + T[i]![1] * best[1] + T[i]![2] * best[2]) as Vec3;
  const [A, B, C] = best;
  const [D, E, F] = a2;
  const normalised = mat3([
    [A, B / 2, D / 2],
    [B / 2, C, E / 2],
    [D / 2, E / 2, F],
  ]);
  // u = N p with N = [[1/s, 0, −mx/s], [0, 1/s, −my/s], [0, 0, 1]]: the conic in pixels is Nᵀ Cu N.
  const N = mat3([
    [1 / spread, 0, -mx / spread],
    [0, 1 / spread, -my / spread],
    [0, 0, 1],
  ]);
  const conic = multiply(transpose(N), multiply(normalised, N));
  const shape = ellipseOfConic(conic);
  if (!shape) throw new GeometryError("The rim points do not lie on an ellipse; check that each sits on the rim.");
  return { ...shape, rmsResidual: conicRms(conic, points) };
}

/** First-order distance of points from a conic: |pᵀCp| / |∇(pᵀCp)|, as an RMS. */
export function conicRms(conic: Mat3, points: readonly Point[]): number {
  let sum = 0;
  for (const p of points) {
    const v: Vec3 = [p.x, p.y, 1];
    const Cv = [0, 1, 2].map((i) => conic[i]![0] * v[0] + conic[i]![1] * v[1] + conic[i]![2] * v[2]);
    const q = v[0] * Cv[0]! + v[1] * Cv[1]! + Cv[2]!;
    const g = 2 * Math.hypot(Cv[0]!, Cv[1]!);
    sum += g > 0 ? (q / g) ** 2 : 0;
  }
  return Math.sqrt(sum / points.length);
}
