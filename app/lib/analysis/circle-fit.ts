/**
 * Circle fits for the inertial circle: an algebraic (Kåsa) fit, which is linear and needs no
 * start but is biased on short arcs, used only to start a geometric (orthogonal-distance) fit by
 * Levenberg–Marquardt, which minimises the sum of squared distances from the points to the circle.
 */
import { leastSquares } from "./regression";
import { solveLinear } from "../linear-solve";

export interface PlanePoint {
  x: number;
  y: number;
}

export interface Circle {
  cx: number;
  cy: number;
  radius: number;
}

export interface CircleFit extends Circle {
  /** Σ (distance to centre − radius)² */
  sumSquaredDistances: number;
  /** √(Σ d²/n) */
  rmsResidual: number;
  iterations: number;
  converged: boolean;
}

/** Kåsa fit: least squares of x² + y² + D x + E y + F = 0. Null when the points fit no circle. */
export function fitCircleAlgebraic(points: readonly PlanePoint[]): Circle | null {
  if (points.length < 3) return null;
  // Centre the data first so the linear system stays well conditioned far from the origin.
  const mx = points.reduce((s, p) => s + p.x, 0) / points.length;
  const my = points.reduce((s, p) => s + p.y, 0) / points.length;
  const design = points.map((p) => [p.x - mx, p.y - my, 1]);
  const rhs = points.map((p) => -((p.x - mx) ** 2 + (p.y - my) ** 2));
  let fit;
  try {
    fit = leastSquares(design, rhs);
  } catch {
    return null;
  }
  const [d, e, f] = fit.coefficients as [number, number, number];
  const cx = -d / 2;
  const cy = -e / 2;
  const r2 = cx * cx + cy * cy - f;
  if (!(r2 > 0) || !Number.isFinite(r2)) return null;
  return { cx: cx + mx, cy: cy + my, radius: Math.sqrt(r2) };
}

function geometricCost(points: readonly PlanePoint[], c: Circle): number {
  let s = 0;
  for (const p of points) {
    const d = Math.hypot(p.x - c.cx, p.y - c.cy) - c.radius;
    s += d * d;
  }
  return s;
}

/**
 * Geometric circle fit by Levenberg–Marquardt on (cx, cy, r), residuals dᵢ = ‖pᵢ − c‖ − r.
 * Starts from the algebraic fit unless a start is given. Null when the points fit no circle
 * (fewer than three, collinear, or the fit runs away to a straight line).
 */
export function fitCircle(points: readonly PlanePoint[], start?: Circle): CircleFit | null {
  const pts = points.filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y));
  if (pts.length < 3) return null;
  const init = start ?? fitCircleAlgebraic(pts);
  if (!init) return null;
  let spread = 0;
  for (const p of pts) spread = Math.max(spread, Math.hypot(p.x - pts[0]!.x, p.y - pts[0]!.y));
  let c: Circle = { ...init };
  let cost = geometricCost(pts, c);
  let lambda = 1e-3;
  let converged = false;
  let iterations = 0;
  for (; iterations < 200; iterations++) {
    // Normal equations JᵀJ δ = −Jᵀd with ∂d/∂cx = −(x − cx)/ρ, ∂d/∂cy = −(y − cy)/ρ, ∂d/∂r = −1.
    const jtj = [
      [0, 0, 0],
      [0, 0, 0],
      [0, 0, 0],
    ];
    const jtd = [0, 0, 0];
    for (const p of pts) {
      const dx = p.x - c.cx;
      const dy = p.y - c.cy;
      const rho = Math.hypot(dx, dy);
      if (rho === 0) continue;
      const j = [-dx / rho, -dy / rho, -1];
      const d = rho - c.radius;
      for (let a = 0; a < 3; a++) {
        jtd[a] = jtd[a]! + j[a]! * d;
        for (let b = 0; b < 3; b++) jtj[a]![b] = jtj[a]![b]! + j[a]! * j[b]!;
      }
    }
    let improved = false;
    for (let attempt = 0; attempt < 30; attempt++) {
      const damped = jtj.map((row, a) => row.map((v, b) => (a === b ? v * (1 + lambda) : v)));
      const step = solveLinear(
        damped.flat(),
        jtd.map((v) => -v),
        3,
      );
      if (!step) {
        lambda *= 10;
        continue;
      }
      const trial: Circle = { cx: c.cx + step[0]!, cy: c.cy + step[1]!, radius: c.radius + step[2]! };
      const trialCost = geometricCost(pts, trial);
      if (trial.radius > 0 && trialCost <= cost) {
        const stepSize = Math.hypot(step[0]!, step[1]!, step[2]!);
        const scale = Math.max(1, c.radius);
        const relGain = cost > 0 ? (cost - trialCost) / cost : 0;
        c = trial;
        cost = trialCost;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (stepSize <= 1e-12 * scale || relGain <= 1e-15) converged = true;
        break;
      }
      lambda *= 10;
    }
    if (!improved) {
      // No step lowers the cost any more: at a minimum to working precision.
      converged = true;
      break;
    }
    if (converged) break;
  }
  // A radius far beyond the track's extent means the points lie on a line, not a circle.
  if (!Number.isFinite(cost) || !(c.radius < 1e4 * Math.max(spread, Number.MIN_VALUE))) return null;
  return {
    ...c,
    sumSquaredDistances: cost,
    rmsResidual: Math.sqrt(cost / pts.length),
    iterations,
    converged,
  };
}
