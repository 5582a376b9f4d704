import { z } from "zod";

/** An API token lives this many days unless its maker chooses otherwise, and never longer than the maximum. */
export const API_TOKEN_DEFAULT_DAYS = 90;
export const API_TOKEN_MAX_DAYS = 365;

export const apiTokenSchema = z.object({
  label: z.string({ error: "Name the token (what script uses it)." }).trim().min(1, "Name the token (what script uses it).").max(80, "At most 80 characters."),
  expiresInDays: z.preprocess(
    (v) => (v === "" || v == null ? API_TOKEN_DEFAULT_DAYS : v),
    z.coerce
      .number({ error: "Give the number of days the token should work." })
      .int("Give a whole number of days.")
      .min(1, "A token works for at least 1 day.")
      .max(API_TOKEN_MAX_DAYS, `A token works for at most ${API_TOKEN_MAX_DAYS} days; make a new one when it runs out.`),
  ),
});
export type ApiTokenInput = z.infer<typeof apiTokenSchema>;
