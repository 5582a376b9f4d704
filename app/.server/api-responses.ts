import type { ZodError } from "zod";
import { apiError } from "./http";
import { BookingError } from "./bookings";
import { CalibrationError } from "./calibrations";
import type { MailQueued } from "./mail/outbox";
import type { MailReport } from "./openapi/responses/common";

/** The API's answer to a refusal from the bookings or calibrations functions; anything else is rethrown. */
export function refusalResponse(err: unknown): Response {
  if (err instanceof BookingError || err instanceof CalibrationError) {
    return apiError(err.status, err.code, err.message, err.field ? { field: err.field } : undefined);
  }
  throw err;
}

/**
 * The API's one answer to a body (or query) that fails its zod schema: 400 invalid_input, with
 * every field in error in `issues`; an unknown field is named as the field itself.
 */
export function invalidInput(error: ZodError): Response {
  const issues = error.issues.flatMap((i) =>
    i.code === "unrecognized_keys"
      ? i.keys.map((key) => ({ field: [...i.path, key].join("."), message: `Unknown field: ${key}.` }))
      : [{ field: i.path.join("."), message: i.message }],
  );
  const messages = [...new Set(issues.map((i) => i.message))];
  return apiError(400, "invalid_input", messages.join(" ") || "The input is not valid.", { issues });
}

export function methodNotAllowed(allowed: string): Response {
  return Response.json({ error: { code: "method_not_allowed", message: `Use ${allowed} here.` } }, { status: 405, headers: { Allow: allowed } });
}

/** The mail a change caused: queued in the outbox (its delivery shows at /api/v1/mail/outbox), or nobody to tell. */
export function mailReport(mail: MailQueued): MailReport {
  return mail.queued ? { queued: true, outboxId: mail.id } : { queued: false };
}
