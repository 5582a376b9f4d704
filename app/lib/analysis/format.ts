/** A number to `digits` significant figures for a verdict's words; exponent form outside 1e-3 … 1e5. */
export function fmt(value: number, digits = 3): string {
  if (!Number.isFinite(value)) return "—";
  if (value === 0) return "0";
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e5) return Number(value.toPrecision(digits)).toString();
  return value.toExponential(digits - 1);
}

/**
 * An interval of fractions as percentages, with as many decimals as it takes for the two ends to
 * differ (one at least, three at most): "10.7% to 11.0%", never "11% to 11%".
 */
export function percentRange(low: number, high: number): string {
  if (!Number.isFinite(low) || !Number.isFinite(high)) return "—";
  const widthPct = Math.abs(high - low) * 100;
  const decimals = widthPct > 0 ? Math.min(3, Math.max(1, Math.ceil(-Math.log10(widthPct)))) : 1;
  const show = (v: number) => `${(100 * v).toFixed(decimals).replace(/^-/, "−")}%`;
  return `${show(low)} to ${show(high)}`;
}
