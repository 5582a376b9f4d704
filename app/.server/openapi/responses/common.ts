import { z } from "../zod";

/** An ISO 8601 time as the API writes it (Date.toISOString: UTC, with Z). */
export const isoTime = () => z.iso.datetime();
export const isoTimeOrNull = () => z.iso.datetime().nullable();

/** One field's problem: the body's own field name ("readings.2.setRpm"), or "" for the body as a whole. */
export const fieldIssueSchema = z.strictObject({ field: z.string(), message: z.string() }).openapi("FieldIssue");

/**
 * The API's one error shape, as http.ts's apiError writes it: {"error": {"code", "message", …}}.
 * A body that fails its request schema is 400 invalid_input with `issues`, one a field; a refusal
 * about one field names it in `field`.
 */
export const errorSchema = z
  .strictObject({
    error: z.strictObject({
      code: z.string().openapi({
        description:
          "Stable and machine-readable: invalid_input, invalid_json, unsupported_media_type, unauthenticated, invalid_token, forbidden, not_found, run_signed_off, booking_conflict…",
      }),
      message: z.string().min(1).openapi({ description: "A sentence for a person." }),
      field: z.string().optional().openapi({ description: "The body or query field the answer is about." }),
      issues: z.array(fieldIssueSchema).optional().openapi({ description: "invalid_input and conditions_not_possible: every field in error." }),
    }),
  })
  .openapi("Error");
export type ApiErrorBody = z.infer<typeof errorSchema>;

/** A record's id and name, as lists show the things a row refers to. */
export const namedSchema = z.strictObject({ id: z.number().int(), name: z.string() }).openapi("Named");

/** Whether the e-mail a change caused was queued in the outbox (with the change itself), or nobody was there to tell. */
export const mailReportSchema = z
  .union([z.strictObject({ queued: z.literal(true), outboxId: z.number().int() }), z.strictObject({ queued: z.literal(false) })])
  .openapi("MailReport", {
    description: "The e-mail this change caused: queued in the outbox (its delivery is listed at /api/v1/mail/outbox), or nobody to tell.",
  });
export type MailReport = z.infer<typeof mailReportSchema>;
