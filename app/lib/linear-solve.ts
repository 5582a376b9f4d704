/**
 * Small dense linear systems (the fits' normal equations: a circle, a disc, a quadratic surface, a
 * track's quality) through ml-matrix's LU decomposition with partial pivoting (Golub & Van Loan
 * 2013, §3.4). A pivot no larger than `singularPivot` in magnitude makes the system singular here:
 * the callers' matrices are sums over pixels or points, of order 1 or more when they are usable.
 */
import { LuDecomposition, Matrix } from "ml-matrix";

const singularPivot = 1e-12;

function decompose(a: ArrayLike<number>, n: number): LuDecomposition | null {
  const rows = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => a[i * n + j]!));
  const lu = new LuDecomposition(new Matrix(rows));
  const pivots = lu.upperTriangularMatrix.diag();
  return pivots.every((p) => Math.abs(p) > singularPivot) ? lu : null;
}

/** x with a·x = b for the n × n matrix `a` (row by row); null when singular. */
export function solveLinear(a: ArrayLike<number>, b: ArrayLike<number>, n: number): Float64Array | null {
  const lu = decompose(a, n);
  if (!lu) return null;
  const x = Float64Array.from(lu.solve(Matrix.columnVector(Array.from(b))).to1DArray());
  return x.every(Number.isFinite) ? x : null;
}

/** The inverse of the n × n matrix `a` (row by row, and so returned); null when singular. */
export function invertMatrix(a: ArrayLike<number>, n: number): Float64Array | null {
  const lu = decompose(a, n);
  if (!lu) return null;
  return Float64Array.from(lu.solve(Matrix.eye(n)).to1DArray());
}
