/**
 * Linear least squares by Householder QR.
 *
 * QR on column-scaled data avoids squaring the condition number, as the normal equations would;
 * that is what lets the NIST StRD checks pass to many digits.
 */

export interface LeastSquaresResult {
  coefficients: number[];
  standardErrors: number[];
  /** Covariance of the coefficients, s²(XᵀX)⁻¹. */
  covariance: number[][];
  /** (XᵀX)⁻¹, for callers that build their own covariance (e.g. a sandwich estimator). */
  inverseNormal: number[][];
  fitted: number[];
  residuals: number[];
  residualSumOfSquares: number;
  residualSD: number;
  degreesOfFreedom: number;
  /** Centred R² when the model has an intercept column, uncentred otherwise. */
  r2: number;
}

export interface LeastSquaresOptions {
  /** Say whether a column of ones is in the design, so R² is centred on the mean. */
  hasIntercept?: boolean;
}

/** A QR factorisation of a design matrix, reusable for several right-hand sides. */
export interface QrFactorisation {
  rows: number;
  cols: number;
  /** Solve min ‖Xβ − y‖ for β. */
  solve(y: readonly number[]): number[];
  /** (XᵀX)⁻¹ = R⁻¹R⁻ᵀ, in the original (unscaled) columns. */
  inverseNormal(): number[][];
}

/** Relative pivot size below which the design counts as rank deficient. */
const RANK_TOLERANCE = 1e-10;

export function qrFactorise(design: readonly (readonly number[])[]): QrFactorisation {
  const m = design.length;
  const n = m > 0 ? design[0]!.length : 0;
  if (m === 0 || n === 0) throw new RangeError("least squares needs at least one row and one column");
  if (m < n) throw new RangeError(`least squares needs at least as many rows (${m}) as unknowns (${n})`);

  // Column-major copy, each column scaled to unit length so the rank test does not depend on units.
  const a: Float64Array[] = [];
  const scale = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const col = new Float64Array(m);
    let ss = 0;
    for (let i = 0; i < m; i++) {
      const row = design[i]!;
      if (row.length !== n) throw new RangeError("every row of the design must have the same length");
      const v = row[j]!;
      if (!Number.isFinite(v)) throw new RangeError("the design contains a value that is not a finite number");
      col[i] = v;
      ss += v * v;
    }
    const norm = Math.sqrt(ss);
    if (norm === 0) throw new RangeError(`column ${j} of the design is all zeros`);
    for (let i = 0; i < m; i++) col[i] = col[i]! / norm;
    scale[j] = norm;
    a.push(col);
  }

  const diag = new Float64Array(n);
  const vNorm2 = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const col = a[k]!;
    let ss = 0;
    for (let i = k; i < m; i++) ss += col[i]! * col[i]!;
    const xk = col[k]!;
    const alpha = xk > 0 ? -Math.sqrt(ss) : Math.sqrt(ss);
    if (Math.abs(alpha) <= RANK_TOLERANCE) throw new RangeError("the design is rank deficient");
    // Householder vector v = x − αe₁ kept in place at and below the diagonal.
    col[k] = xk - alpha;
    const vv = 2 * ss - 2 * alpha * xk;
    vNorm2[k] = vv;
    diag[k] = alpha;
    for (let j = k + 1; j < n; j++) {
      const cj = a[j]!;
      let dot = 0;
      for (let i = k; i < m; i++) dot += col[i]! * cj[i]!;
      const f = (2 * dot) / vv;
      for (let i = k; i < m; i++) cj[i] = cj[i]! - f * col[i]!;
    }
  }

  // R: diagonal in diag, entries above it in a[j][i] for i < j.
  const rEntry = (i: number, j: number): number => (i === j ? diag[i]! : a[j]![i]!);

  function solve(y: readonly number[]): number[] {
    if (y.length !== m) throw new RangeError("right-hand side length differs from the number of rows");
    const b = Float64Array.from(y);
    for (let k = 0; k < n; k++) {
      const v = a[k]!;
      let dot = 0;
      for (let i = k; i < m; i++) dot += v[i]! * b[i]!;
      const f = (2 * dot) / vNorm2[k]!;
      for (let i = k; i < m; i++) b[i] = b[i]! - f * v[i]!;
    }
    const beta = new Array<number>(n).fill(0);
    for (let i = n - 1; i >= 0; i--) {
      let s = b[i]!;
      for (let j = i + 1; j < n; j++) s -= rEntry(i, j) * beta[j]!;
      beta[i] = s / diag[i]!;
    }
    return beta.map((v, j) => v / scale[j]!);
  }

  function inverseNormal(): number[][] {
    const rInv: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    for (let j = 0; j < n; j++) {
      rInv[j]![j] = 1 / diag[j]!;
      for (let i = j - 1; i >= 0; i--) {
        let s = 0;
        for (let k = i + 1; k <= j; k++) s += rEntry(i, k) * rInv[k]![j]!;
        rInv[i]![j] = -s / diag[i]!;
      }
    }
    const out: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        let s = 0;
        for (let k = Math.max(i, j); k < n; k++) s += rInv[i]![k]! * rInv[j]![k]!;
        out[i]![j] = s / (scale[i]! * scale[j]!);
      }
    }
    return out;
  }

  return { rows: m, cols: n, solve, inverseNormal };
}

/**
 * General linear least squares y ≈ Xβ with the usual (independent, equal-variance residual)
 * standard errors. Throws RangeError on a rank-deficient or non-finite design.
 */
export function leastSquares(design: readonly (readonly number[])[], y: readonly number[], options: LeastSquaresOptions = {}): LeastSquaresResult {
  if (y.length !== design.length) throw new RangeError("design and observations differ in length");
  if (!y.every(Number.isFinite)) throw new RangeError("the observations contain a value that is not a finite number");
  const qr = qrFactorise(design);
  const coefficients = qr.solve(y);
  const fitted = design.map((row) => row.reduce((s, v, j) => s + v * coefficients[j]!, 0));
  const residuals = y.map((v, i) => v - fitted[i]!);
  const rss = residuals.reduce((s, r) => s + r * r, 0);
  const dof = design.length - qr.cols;
  const residualSD = dof > 0 ? Math.sqrt(rss / dof) : Number.NaN;
  const inverseNormal = qr.inverseNormal();
  const s2 = residualSD * residualSD;
  const covariance = inverseNormal.map((row) => row.map((v) => v * s2));
  const standardErrors = covariance.map((row, j) => Math.sqrt(row[j]!));
  let tss = 0;
  if (options.hasIntercept) {
    const mean = y.reduce((s, v) => s + v, 0) / y.length;
    for (const v of y) tss += (v - mean) * (v - mean);
  } else {
    for (const v of y) tss += v * v;
  }
  const r2 = tss > 0 ? 1 - rss / tss : Number.NaN;
  return {
    coefficients,
    standardErrors,
    covariance,
    inverseNormal,
    fitted,
    residuals,
    residualSumOfSquares: rss,
    residualSD,
    degreesOfFreedom: dof,
    r2,
  };
}

export interface LinearFit {
  slope: number;
  intercept: number;
  slopeSE: number;
  interceptSE: number;
  residualSD: number;
  r2: number;
  maxAbsResidual: number;
}

/**
 * Straight line y = intercept + slope·x by ordinary least squares, with the textbook standard
 * errors. x is centred before the fit so that large offsets (e.g. clock times) lose no digits.
 * Throws RangeError when fewer than two points, unequal lengths, non-finite values or all x equal;
 * with exactly two points the standard errors and residual SD are NaN (no degrees of freedom).
 */
export function linearFit(x: readonly number[], y: readonly number[]): LinearFit {
  if (x.length !== y.length) throw new RangeError("x and y differ in length");
  if (x.length < 2) throw new RangeError("a straight-line fit needs at least two points");
  if (!x.every(Number.isFinite) || !y.every(Number.isFinite)) {
    throw new RangeError("a straight-line fit needs finite numbers only");
  }
  const n = x.length;
  const xMean = x.reduce((s, v) => s + v, 0) / n;
  const xc = x.map((v) => v - xMean);
  if (xc.every((v) => v === 0)) throw new RangeError("all x values are equal: the slope is undefined");
  const fit = leastSquares(
    xc.map((v) => [1, v]),
    y,
    { hasIntercept: true },
  );
  const [b0c, slope] = fit.coefficients as [number, number];
  const intercept = b0c - slope * xMean;
  // With centred x the two coefficients are uncorrelated, so the intercept's variance adds simply.
  const varB0c = fit.covariance[0]![0]!;
  const varSlope = fit.covariance[1]![1]!;
  const interceptSE = Math.sqrt(varB0c + xMean * xMean * varSlope);
  return {
    slope,
    intercept,
    slopeSE: Math.sqrt(varSlope),
    interceptSE,
    residualSD: fit.residualSD,
    r2: fit.r2,
    maxAbsResidual: fit.residuals.reduce((mx, r) => Math.max(mx, Math.abs(r)), 0),
  };
}
