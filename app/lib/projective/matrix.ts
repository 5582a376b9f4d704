/**
 * Small dense linear algebra for plane projective geometry: 3 × 3 matrices (row-major, as nine
 * numbers in three rows), homogeneous points, and the eigen-decomposition of a small symmetric
 * matrix by cyclic Jacobi rotations (Golub & Van Loan 2013, §8.5), which the ellipse fit and the
 * direct linear transform solve their least-squares problems with.
 */

export type Vec3 = [number, number, number];
export type Mat3 = [Vec3, Vec3, Vec3];
type Index = 0 | 1 | 2;

export function mat3(rows: readonly (readonly number[])[]): Mat3 {
  const r = (i: number): Vec3 => [rows[i]?.[0] ?? 0, rows[i]?.[1] ?? 0, rows[i]?.[2] ?? 0];
  return [r(0), r(1), r(2)];
}

export const identity3 = (): Mat3 => [
  [1, 0, 0],
  [0, 1, 0],
  [0, 0, 1],
];

const dot3 = (u: Vec3, v: Vec3): number => u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
const row3 = (u: Vec3, bt: Mat3): Vec3 => [dot3(u, bt[0]), dot3(u, bt[1]), dot3(u, bt[2])];

export function multiply(a: Mat3, b: Mat3): Mat3 {
  const bt = transpose(b);
  return [row3(a[0], bt), row3(a[1], bt), row3(a[2], bt)];
}

/** The outer product u vᵀ. */
export function outer(u: Vec3, v: Vec3): Mat3 {
  return [
    [u[0] * v[0], u[0] * v[1], u[0] * v[2]],
    [u[1] * v[0], u[1] * v[1], u[1] * v[2]],
    [u[2] * v[0], u[2] * v[1], u[2] * v[2]],
  ];
}

/** Entry-wise a + b. */
export function addMatrices(a: Mat3, b: Mat3): Mat3 {
  const row = (u: Vec3, v: Vec3): Vec3 => [u[0] + v[0], u[1] + v[1], u[2] + v[2]];
  return [row(a[0], b[0]), row(a[1], b[1]), row(a[2], b[2])];
}

export function transpose(a: Mat3): Mat3 {
  return [
    [a[0][0], a[1][0], a[2][0]],
    [a[0][1], a[1][1], a[2][1]],
    [a[0][2], a[1][2], a[2][2]],
  ];
}

export function applyTo(a: Mat3, v: Vec3): Vec3 {
  return [a[0][0] * v[0] + a[0][1] * v[1] + a[0][2] * v[2], a[1][0] * v[0] + a[1][1] * v[1] + a[1][2] * v[2], a[2][0] * v[0] + a[2][1] * v[1] + a[2][2] * v[2]];
}

export function determinant(a: Mat3): number {
  return (
    a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1]) - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0]) + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0])
  );
}

/** The inverse, or null when the matrix is singular relative to its size. */
export function invert(a: Mat3): Mat3 | null {
  const det = determinant(a);
  const size = Math.max(...a.flat().map(Math.abs));
  if (!Number.isFinite(det) || size === 0 || Math.abs(det) <= 1e-12 * size ** 3) return null;
  const c = (r0: Index, c0: Index, r1: Index, c1: Index) => a[r0][c0] * a[r1][c1] - a[r0][c1] * a[r1][c0];
  return [
    [c(1, 1, 2, 2) / det, -c(0, 1, 2, 2) / det, c(0, 1, 1, 2) / det],
    [-c(1, 0, 2, 2) / det, c(0, 0, 2, 2) / det, -c(0, 0, 1, 2) / det],
    [c(1, 0, 2, 1) / det, -c(0, 0, 2, 1) / det, c(0, 0, 1, 1) / det],
  ];
}

export function scaleMatrix(a: Mat3, s: number): Mat3 {
  return a.map((row) => row.map((x) => x * s)) as Mat3;
}

/** Eigenvalues (ascending) and unit eigenvectors (as columns: vectors[k] belongs to values[k]) of a symmetric n × n matrix. */
export function symmetricEigen(input: readonly (readonly number[])[]): { values: number[]; vectors: number[][] } {
  const n = input.length;
  const a = input.map((row) => [...row]);
  const v = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)));
  const at = (m: number[][], i: number, j: number) => m[i]![j]!;
  const put = (m: number[][], i: number, j: number, x: number) => {
    m[i]![j] = x;
  };
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += at(a, i, j) ** 2;
    let diag = 0;
    for (let i = 0; i < n; i++) diag += at(a, i, i) ** 2;
    if (off <= 1e-30 * Math.max(diag, 1e-300)) break;
    for (let p = 0; p < n; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = at(a, p, q);
        if (apq === 0) continue;
        const theta = (at(a, q, q) - at(a, p, p)) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = at(a, k, p);
          const akq = at(a, k, q);
          put(a, k, p, c * akp - s * akq);
          put(a, k, q, s * akp + c * akq);
        }
        for (let k = 0; k < n; k++) {
          const apk = at(a, p, k);
          const aqk = at(a, q, k);
          put(a, p, k, c * apk - s * aqk);
          put(a, q, k, s * apk + c * aqk);
        }
        for (let k = 0; k < n; k++) {
          const vkp = at(v, k, p);
          const vkq = at(v, k, q);
          put(v, k, p, c * vkp - s * vkq);
          put(v, k, q, s * vkp + c * vkq);
        }
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => at(a, i, i) - at(a, j, j));
  return { values: order.map((i) => at(a, i, i)), vectors: order.map((i) => v.map((row) => row[i]!)) };
}
