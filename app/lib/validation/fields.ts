import { z } from "zod";
import { NOT_A_NUMBER, readNumber } from "../number-input";

/**
 * What a number field may arrive as: a number (JSON) or what a person typed (see lib/number-input:
 * a point or a decimal comma). Blank stays blank for the field's own "required"/"optional"
 * handling; text that is not a number, booleans, arrays and objects are refused with NOT_A_NUMBER
 * on the field itself (instead of `true` turning into 1, or "ten" reading as a missing value).
 */
export function numberInput(v: unknown, ctx?: z.RefinementCtx): unknown {
  const reading = readNumber(v);
  if (reading.kind === "number") return reading.value;
  if (reading.kind === "blank") return typeof v === "string" ? "" : v;
  ctx?.addIssue({ code: "custom", message: NOT_A_NUMBER, input: v });
  return NaN;
}

/** Wraps a number schema so it takes numbers and typed decimal text only; see numberInput. */
export const strictNumber = <T extends z.ZodType>(schema: T) => z.preprocess((v, ctx) => numberInput(v, ctx), schema);

/**
 * A form's cross-field checks run even when a field already failed, so the person sees every
 * problem at once, each on its field, instead of one after another (zod skips them by default).
 * The checks must read the fields they use as possibly not parsed (a failed field keeps its input).
 */
export const evenWithFieldErrors = { when: (payload: { value: unknown }) => typeof payload.value === "object" && payload.value !== null };

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
