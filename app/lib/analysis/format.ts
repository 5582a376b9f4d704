/** A number to `digits` significant figures for a verdict's words; exponent form outside 1e-3 … 1e5. */
export function fmt(value: number, digits = 3): string {
  if (!Number.isFinite(value)) return "—";
  if (value === 0) return "0";
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e5) return Number(value.toPrecision(digits)).toString();
  return value.toExponential(digits - 1);
}
