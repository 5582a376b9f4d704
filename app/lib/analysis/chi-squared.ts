/**
 * The chi-squared distribution's upper tail: the chance that χ² with `dof` degrees of freedom is
 * at least x. simple-statistics has only a table of critical values (Hines & Montgomery 1980,
 * Table III, two decimals), so this is the regularised upper incomplete gamma Q(dof/2, x/2),
 * by its series below a + 1 and its continued fraction (modified Lentz) beyond, as in Press et al.,
 * Numerical Recipes, 3rd ed. (2007), §6.2; ln Γ from simple-statistics. Checked against that table.
 */
import { gammaln } from "simple-statistics";

const EPS = 1e-15;
const MAX_ITERATIONS = 500;

function lowerSeries(a: number, x: number): number {
  // P(a, x) = e^{−x} x^a / Γ(a+1) · Σ x^n / ((a+1)…(a+n))
  let term = 1 / a;
  let sum = term;
  for (let n = 1; n < MAX_ITERATIONS; n++) {
    term *= x / (a + n);
    sum += term;
    if (Math.abs(term) < Math.abs(sum) * EPS) break;
  }
  return sum * Math.exp(-x + a * Math.log(x) - gammaln(a));
}

function upperFraction(a: number, x: number): number {
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < MAX_ITERATIONS; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < EPS) break;
  }
  return Math.exp(-x + a * Math.log(x) - gammaln(a)) * h;
}

/** P(χ²_dof ≥ x); NaN for a dof that is not a positive number or an x that is not a number. */
export function chiSquaredUpperTail(x: number, dof: number): number {
  if (!(dof > 0) || Number.isNaN(x)) return Number.NaN;
  if (x <= 0) return 1;
  if (x === Number.POSITIVE_INFINITY) return 0;
  const a = dof / 2;
  const half = x / 2;
  return half < a + 1 ? 1 - lowerSeries(a, half) : upperFraction(a, half);
}
