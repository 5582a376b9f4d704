/**
 * Axis ticks at round values: steps of 1, 2 or 5 × 10ⁿ, so a time axis reads 0, 0.5, 1, 1.5 s rather
 * than 0.433, 0.983, 1.53. Pure arithmetic, shared by every plot.
 *
 * Tick values are whole multiples of the step, computed as k × step and rounded to the step's own
 * decimals, so no value carries binary noise (0.30000000000000004 is written 0.3).
 */

export type Domain = [number, number];

/** The round step (1, 2 or 5 × 10ⁿ) that cuts `span` into about `count` parts, never fewer than needed. */
export function niceStep(span: number, count = 6): number {
  if (!(span > 0) || !Number.isFinite(span)) return 1;
  const raw = span / Math.max(1, Math.round(count));
  const mag = 10 ** Math.floor(Math.log10(raw));
  return [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw * (1 - 1e-9)) ?? 10 * mag;
}

/** Decimals a multiple of `step` needs (0.5 → 1, 0.25 → 2, 20 → 0). */
function stepDecimals(step: number): number {
  for (let d = 0; d <= 15; d++) {
    const scaled = step * 10 ** d;
    if (Math.abs(scaled - Math.round(scaled)) < 1e-9 * Math.max(1, scaled)) return d;
  }
  return 15;
}

const multiple = (k: number, step: number, decimals: number) => {
  const v = Number((k * step).toFixed(decimals));
  return v === 0 ? 0 : v; // no "-0"
};

/**
 * Round tick values inside `[lo, hi]` (ends included when they fall on a tick). The domain stays as
 * given, for plots whose domain is fixed (equal-aspect track plots).
 */
export function niceTicks([lo, hi]: Domain, count = 6): number[] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [];
  if (!(hi > lo)) return [lo];
  const step = niceStep(hi - lo, count);
  const decimals = stepDecimals(step);
  const slack = 1e-9 * (hi - lo);
  const first = Math.ceil((lo - slack) / step);
  const last = Math.floor((hi + slack) / step);
  const out: number[] = [];
  for (let k = first; k <= last; k++) out.push(multiple(k, step, decimals));
  return out;
}

/**
 * A domain widened outwards to round ends, with its ticks: data from 0.12 s to 2.93 s is drawn on
 * 0 … 3 s, ticked every 0.5 s. An empty or single-valued range gets a unit-wide domain around it.
 */
export function niceScale(values: readonly number[], count = 6): { domain: Domain; ticks: number[] } {
  const finite = values.filter(Number.isFinite);
  if (!finite.length) return { domain: [0, 1], ticks: niceTicks([0, 1], count) };
  let lo = Math.min(...finite);
  let hi = Math.max(...finite);
  if (!(hi > lo)) {
    const pad = lo === 0 ? 1 : Math.abs(lo) / 2;
    lo -= pad;
    hi += pad;
  }
  const step = niceStep(hi - lo, count);
  const decimals = stepDecimals(step);
  const domain: Domain = [multiple(Math.floor(lo / step + 1e-9), step, decimals), multiple(Math.ceil(hi / step - 1e-9), step, decimals)];
  return { domain, ticks: niceTicks(domain, count) };
}
