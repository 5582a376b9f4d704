import { z } from "zod";

/** Plain decimal text as a form sends it: "12", "-0.5", "1e-3". Not "0x10", "Infinity" or " ". */
const decimal = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/**
 * What a number field may arrive as: a number (JSON) or decimal text (a form). Blank stays blank for
 * the field's own "required"/"optional" handling; booleans, arrays, objects and other text become
 * NaN, which the number schema refuses with the field's message, instead of `true` turning into 1.
 */
export function numberInput(v: unknown): unknown {
  if (v === undefined || v === null || typeof v === "number") return v;
  if (typeof v === "string") return v.trim() === "" || decimal.test(v.trim()) ? v : NaN;
  return NaN;
}

/** Wraps a (coercing) number schema so it takes numbers and decimal text only; see numberInput. */
export const strictNumber = <T extends z.ZodType>(schema: T) => z.preprocess(numberInput, schema);

/** The years Tankside's records live in: a date outside them is a typing slip, not a lab event. */
export const FIRST_YEAR = 2000;
export const LAST_YEAR = 2099;

/** A real calendar day "YYYY-MM-DD" (no 30 February) within Tankside's years. */
export function isPlausibleDay(s: string): boolean {
  const m = /^(\d{4})-(\d{2})-(\d{2})/.exec(s);
  if (!m) return false;
  const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
  const date = new Date(Date.UTC(y, mo - 1, d));
  return y >= FIRST_YEAR && y <= LAST_YEAR && date.getUTCMonth() === mo - 1 && date.getUTCDate() === d;
}

/** A date and time given as text (a form field or an ISO 8601 string in JSON) on a real day within Tankside's years. */
export function isPlausibleDateTime(v: unknown): boolean {
  if (v instanceof Date) return !Number.isNaN(v.getTime()) && isPlausibleDay(v.toISOString());
  return typeof v === "string" && isPlausibleDay(v.trim()) && !Number.isNaN(new Date(v).getTime());
}

/** What a date-and-time field may arrive as before coercion: plausible text (see above) or a Date; anything else is NaN, an invalid date. */
export function dateInput(v: unknown): unknown {
  if (v === undefined || v === null || v === "") return v;
  return isPlausibleDateTime(v) ? v : NaN;
}
