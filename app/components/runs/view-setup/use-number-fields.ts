import { useState, type ChangeEvent } from "react";
import { NOT_A_NUMBER, readNumber } from "~/lib/number-input";
import type { SetupValues } from "~/lib/setup-marks";

const shownNumber = (n: number | undefined | null) => (n === null || n === undefined ? "" : String(Math.round(n * 100) / 100));

export const positive = (what: string, unit: string) => (n: number) => (n > 0 ? null : `${what} must be more than 0 ${unit}.`);

/**
 * The setup's number fields. What the person is typing is kept as typed ("12.", "12,5") until the
 * field is left; the marks follow every value that reads as a number, and nothing else (no NaN, no 0).
 */
export function useNumberFields(setV: (v: SetupValues) => void, errors: Record<string, string[] | undefined>) {
  const [drafts, setDrafts] = useState<Record<string, string>>({});

  /**
   * A number field: shows the draft while typed, applies each value that reads as a number and
   * passes `rule` (null when blank), and says at once what is wrong. With `invalidAsBlank`, text that
   * is not a number applies null, so what is saved never keeps an older number the field no longer shows.
   */
  function numberField(
    name: string,
    shown: number | null | undefined,
    apply: (n: number | null) => SetupValues | null,
    rule?: (n: number) => string | null,
    options: { serverError?: string[]; invalidAsBlank?: boolean } = {},
  ) {
    const draft = drafts[name];
    const text = draft ?? shownNumber(shown);
    const reading = readNumber(text);
    const live = reading.kind === "invalid" ? NOT_A_NUMBER : reading.kind === "number" && rule ? rule(reading.value) : null;
    return {
      name,
      inputMode: "decimal" as const,
      value: text,
      error: draft !== undefined ? (live ? [live] : undefined) : (options.serverError ?? errors[name]),
      onChange: (e: ChangeEvent<HTMLInputElement>) => {
        const typed = e.target.value;
        setDrafts((d) => ({ ...d, [name]: typed }));
        const r = readNumber(typed);
        if (r.kind === "invalid" || (r.kind === "number" && rule?.(r.value))) {
          if (options.invalidAsBlank) {
            const cleared = apply(null);
            if (cleared) setV(cleared);
          }
          return;
        }
        const next = apply(r.kind === "number" ? r.value : null);
        if (next) setV(next);
      },
      // A finished entry is shown as the number it was read as; a refused one stays, with its message.
      onBlur: () => {
        if (!live)
          setDrafts((d) => {
            const rest = { ...d };
            delete rest[name];
            return rest;
          });
      },
    };
  }

  return { numberField, drafts, clearDrafts: () => setDrafts({}) };
}
