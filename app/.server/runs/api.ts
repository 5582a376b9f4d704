import { apiError } from "../http";
import { RunError, RunValidationError } from "./service";
import { RunFilterError } from "./queries";

/** Turns the run services' known errors into the API's error shape; anything else is rethrown. */
export function runErrorResponse(err: unknown): Response {
  // Well-formed, but the register or the run's frames refuse it: 422, with the fields named as invalid_input names them.
  if (err instanceof RunValidationError) {
    return apiError(422, "conditions_not_possible", err.message, {
      field: err.problems[0]?.field ?? "",
      issues: err.problems.map((p) => ({ field: p.field, message: p.message })),
    });
  }
  if (err instanceof RunFilterError) return apiError(400, err.code, err.message, err.field ? { field: err.field } : undefined);
  if (err instanceof RunError) return apiError(err.status, err.code, err.message, err.field ? { field: err.field } : undefined);
  throw err;
}
