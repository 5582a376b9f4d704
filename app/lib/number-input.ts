/**
 * What a person typed into a number field, read the same way by every form, in the browser as it
 * is typed and on the server when it arrives: "10.5", "10,5" (a decimal comma), " 10.5 ", "-3",
 * "−3" (a typographic minus), ".5", "1e-3". Blank is blank (the field decides whether it may be);
 * anything else ("ten", "1,000.5", "0x10", "Infinity", "12 rpm") is not a number.
 *
 * One comma or one point is the decimal mark; grouping marks are not taken, because "1,000" means
 * one thousand to some people and one to others, and a calibration must not guess.
 */
export type NumberReading = { kind: "blank" } | { kind: "number"; value: number } | { kind: "invalid" };

/** Digits with at most one decimal mark (point or comma) and an optional exponent. */
const decimalText = /^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$/;

/** The words a form shows under a field whose text is not a number. */
export const NOT_A_NUMBER = "That is not a number. Type digits, with a point or a comma before the decimals (e.g. 10.5).";

const blank: NumberReading = { kind: "blank" };
const invalid: NumberReading = { kind: "invalid" };

export function readNumber(input: unknown): NumberReading {
  if (input === undefined || input === null) return blank;
  if (typeof input === "number") return Number.isFinite(input) ? { kind: "number", value: input } : invalid;
  if (typeof input !== "string") return invalid;
  const text = input.trim().replace(/^\u2212/, "-");
  if (text === "") return blank;
  if (!decimalText.test(text)) return invalid;
  const value = Number(text.replace(",", "."));
  return Number.isFinite(value) ? { kind: "number", value } : invalid;
}

/** The number in a field's text, or null when it is blank or not a number (for live previews while typing). */
export function numberOrNull(input: unknown): number | null {
  const r = readNumber(input);
  return r.kind === "number" ? r.value : null;
}
