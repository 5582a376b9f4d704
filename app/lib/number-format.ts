/**
 * Numbers as Tankside writes them on pages, in verdicts and in e-mails, through Intl.NumberFormat
 * (formatters cached by their digits). One locale, "en-US", on the server and in the browser, so a
 * page renders the same on both: a full stop for the decimal sign and no thousands separators (a
 * figure is copied into spreadsheets next to the CSV, which has none).
 *
 * - formatNumber: significant digits, because a measurement's precision does not depend on its
 *   size; trailing zeros dropped; exponent form ("1.5e-4", "2.35e+6") outside 0.001 … 1 000 000.
 * - formatWithError: a value and its standard error with the same fraction digits, to the error's
 *   second significant digit.
 * - percentRange: an interval of fractions as percentages, with a true minus sign.
 *
 * Halfway cases round away from zero on the number as written in decimal (1.0005 → 1.001), where
 * Number.prototype.toFixed rounds the binary value (1.000).
 */

const LOCALE = "en-US";
const NO_NUMBER = "—";

const significantFormats = new Map<number, Intl.NumberFormat>();
const scientificFormats = new Map<number, Intl.NumberFormat>();
const fixedFormats = new Map<number, Intl.NumberFormat>();

function cached(cache: Map<number, Intl.NumberFormat>, digits: number, options: Intl.NumberFormatOptions): Intl.NumberFormat {
  let format = cache.get(digits);
  if (!format) {
    format = new Intl.NumberFormat(LOCALE, { useGrouping: false, signDisplay: "negative", ...options });
    cache.set(digits, format);
  }
  return format;
}

/** Significant digits are 1–21 for Intl.NumberFormat; anything else is a caller's slip, clamped. */
const clampSignificant = (digits: number) => (Number.isFinite(digits) ? Math.min(21, Math.max(1, Math.round(digits))) : 4);
/** Fraction digits 0–20, as Number.prototype.toFixed allows (and, like it, none for a count that is not a number). */
const clampFraction = (digits: number) => (Number.isFinite(digits) ? Math.min(20, Math.max(0, Math.round(digits))) : 0);

/** `value` to `digits` significant digits, or a dash when there is no finite number. */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NO_NUMBER;
  if (value === 0) return "0";
  const d = clampSignificant(digits);
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e6) return cached(significantFormats, d, { maximumSignificantDigits: d }).format(value);
  const parts = cached(scientificFormats, d, { notation: "scientific", maximumSignificantDigits: d }).formatToParts(value);
  const negativeExponent = parts.some((p) => p.type === "exponentMinusSign");
  return parts.map((p) => (p.type === "exponentSeparator" ? (negativeExponent ? "e" : "e+") : p.value)).join("");
}

/** `value` with exactly `decimals` fraction digits (0–20), or a dash. */
export function formatFixed(value: number | null | undefined, decimals: number): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NO_NUMBER;
  const d = clampFraction(decimals);
  return cached(fixedFormats, d, { minimumFractionDigits: d, maximumFractionDigits: d }).format(value);
}

/**
 * "value ± se", both to the standard error's second significant digit (at least `minDecimals`
 * fraction digits, at most 12). Without a positive, finite standard error the value stands alone:
 * with `minDecimals` fraction digits when asked for, else to four significant digits.
 */
export function formatWithError(value: number, se: number | null | undefined, minDecimals = 0): string {
  if (se === null || se === undefined || !(se > 0) || !Number.isFinite(se)) {
    return minDecimals > 0 ? formatFixed(value, minDecimals) : formatNumber(value, 4);
  }
  const decimals = Math.min(12, Math.max(minDecimals, 1 - Math.floor(Math.log10(se))));
  return `${formatFixed(value, decimals)} ± ${formatFixed(se, decimals)}`;
}

/**
 * An interval of fractions as percentages, with as many decimals as it takes for the two ends to
 * differ (one at least, three at most): "10.7% to 11.0%", never "11% to 11%".
 */
export function percentRange(low: number, high: number): string {
  if (!Number.isFinite(low) || !Number.isFinite(high)) return NO_NUMBER;
  const widthPct = Math.abs(high - low) * 100;
  const decimals = widthPct > 0 ? Math.min(3, Math.max(1, Math.ceil(-Math.log10(widthPct)))) : 1;
  const show = (v: number) => `${formatFixed(100 * v, decimals).replace(/^-/, "−")}%`;
  return `${show(low)} to ${show(high)}`;
}

/** A length stored in metres, shown in centimetres to `digits` significant digits: 0.57 m → "57 cm" (never "56.99999999999999 cm"). */
export function formatCentimetres(metres: number | null | undefined, digits = 4): string {
  if (metres === null || metres === undefined || !Number.isFinite(metres)) return NO_NUMBER;
  return `${formatNumber(metres * 100, digits)} cm`;
}
