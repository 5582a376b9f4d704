import type { Route } from "./+types/run-sign-off";
import { requireRole } from "~/.server/auth/permissions";
import { parseId } from "~/.server/http";
import { methodNotAllowed } from "~/.server/api-responses";
import { signOffRun } from "~/.server/runs/record";
import { runErrorResponse } from "~/.server/runs/api";
import { serializeRun } from "~/.server/runs/serialize";

/**
 * POST /api/v1/runs/:id/sign-off (lab manager): the same service as the run page's form. 409
 * check_out_of_date while the run has no check made from its present inputs, run_signed_off when
 * it is already signed off, not_checked before it has been checked.
 */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "lab_manager");
  if (request.method !== "POST") return methodNotAllowed("POST");
  const runId = parseId(request, params.id, "That run");
  try {
    return Response.json(serializeRun(await signOffRun(runId, user)));
  } catch (err) {
    return runErrorResponse(err);
  }
}

export function loader() {
  return methodNotAllowed("POST");
}
