import { parseWithZod } from "@conform-to/zod/v4";
import type { z } from "zod";

/**
 * How every form checks itself in the browser before it is sent, in one place: the whole schema on
 * submit (so the first submit shows every error at once, each on its field, cross-field "needs"
 * included), then again as each field is typed in. Never on leaving a field: a check on blur fired
 * by pressing the submit button drew messages above it, the button moved under the pointer, and the
 * click that was meant to submit landed beside it, so only the blurred field's error showed.
 *
 * Spread into conform's `useForm`: `useForm({ lastResult, ...formCheck(schema), defaultValue })`.
 */
export function formCheck<Schema extends z.ZodType>(schema: Schema) {
  return {
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }: { formData: FormData }) => parseWithZod(formData, { schema }),
  } as const;
}
