/**
 * The plane-to-plane homography from four or more point pairs: the normalised direct linear
 * transform (Hartley & Zisserman 2004, §4.4, algorithm 4.2). Each set is moved to its centroid and
 * scaled to a mean distance of √2 from it, the 2n × 9 system is solved in the least-squares sense
 * (the eigenvector of AᵀA with the smallest eigenvalue, which is the SVD's last right singular
 * vector), and the normalisation is undone.
 */
import type { Point } from "../geometry";
import { GeometryError } from "./geometry-error";
import { applyTo, invert, mat3, multiply, scaleMatrix, symmetricEigen, type Mat3 } from "./matrix";

export interface PointPair {
  from: Point;
  to: Point;
}

/** The similarity taking points to their centroid and a mean distance of √2 (H&Z 2004, §4.4.4). */
function normalising(points: readonly Point[]): Mat3 {
  const n = points.length;
  const mx = points.reduce((s, p) => s + p.x, 0) / n;
  const my = points.reduce((s, p) => s + p.y, 0) / n;
  const mean = points.reduce((s, p) => s + Math.hypot(p.x - mx, p.y - my), 0) / n;
  const k = Math.SQRT2 / mean;
  return mat3([
    [k, 0, -k * mx],
    [0, k, -k * my],
    [0, 0, 1],
  ]);
}

/** A homogeneous point to the plane; null at infinity. */
export function project(H: Mat3, p: Point): Point | null {
  const [x, y, w] = applyTo(H, [p.x, p.y, 1]);
  if (!(Math.abs(w) > 1e-300)) return null;
  const out = { x: x / w, y: y / w };
  return Number.isFinite(out.x) && Number.isFinite(out.y) ? out : null;
}

function anyThreeInLine(points: readonly Point[], scale: number): boolean {
  if (points.length !== 4) return false;
  for (let i = 0; i < 4; i++) {
    const [a, b, c] = points.filter((_, j) => j !== i) as [Point, Point, Point];
    const area = (b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x);
    if (Math.abs(area) < 1e-6 * scale * scale) return true;
  }
  return false;
}

/** H with H·from ≅ to for every pair (exactly for four, in the least-squares sense for more). */
export function homographyFromPairs(pairs: readonly PointPair[], what = "known points"): Mat3 {
  if (pairs.length < 4)
    throw new GeometryError(`A correction from ${what} needs at least four of them; ${pairs.length} ${pairs.length === 1 ? "was" : "were"} given.`);
  if (pairs.some((p) => ![p.from.x, p.from.y, p.to.x, p.to.y].every(Number.isFinite)))
    throw new GeometryError(`Every one of the ${what} needs numbers for both positions.`);
  const T1 = normalising(pairs.map((p) => p.from));
  const T2 = normalising(pairs.map((p) => p.to));
  if (![T1, T2].every((T) => Number.isFinite(T[0][0]))) throw new GeometryError(`The ${what} all sit on one spot; spread them over the tank.`);
  const from = pairs.map((p) => project(T1, p.from)!);
  const to = pairs.map((p) => project(T2, p.to)!);
  if (anyThreeInLine(from, Math.SQRT2) || anyThreeInLine(to, Math.SQRT2))
    throw new GeometryError(`Three of the four ${what} lie in a line; pick points spread around the tank.`);
  const ata = Array.from({ length: 9 }, () => new Array<number>(9).fill(0));
  const addRow = (row: number[]) => {
    for (let i = 0; i < 9; i++) for (let j = 0; j < 9; j++) ata[i]![j]! += row[i]! * row[j]!;
  };
  from.forEach((p, i) => {
    const q = to[i]!;
    addRow([0, 0, 0, -p.x, -p.y, -1, q.y * p.x, q.y * p.y, q.y]);
    addRow([p.x, p.y, 1, 0, 0, 0, -q.x * p.x, -q.x * p.y, -q.x]);
  });
  const { values, vectors } = symmetricEigen(ata);
  // A rank below 8 (points in a line, repeated points) leaves more than one solution.
  if (!(values[1]! > 1e-10 * values[8]!))
    throw new GeometryError(`The ${what} do not fix a correction: some lie in a line or repeat; spread them around the tank.`);
  const h = vectors[0]!;
  const Hn = mat3([h.slice(0, 3), h.slice(3, 6), h.slice(6, 9)]);
  const T2inv = invert(T2)!;
  const H = multiply(T2inv, multiply(Hn, T1));
  if (!invert(H)) throw new GeometryError(`The ${what} do not fix a correction: some lie in a line or repeat; spread them around the tank.`);
  // Scale so that H[2][2] = 1 when that is possible (it is unless the origin maps to infinity).
  return Math.abs(H[2][2]) > 1e-12 ? scaleMatrix(H, 1 / H[2][2]) : H;
}
