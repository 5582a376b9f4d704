import type { Route } from "./+types/mail-outbox-send-again";
import { requireRole } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { methodNotAllowed } from "~/.server/api-responses";
import { sendAgain } from "~/.server/mail/outbox";

/** POST /api/v1/mail/outbox/:id/send-again — a failed message queued afresh (lab manager); 409 for one that is not failed. */
export async function action({ request, params }: Route.ActionArgs) {
  await requireRole(request, "lab_manager");
  if (request.method !== "POST") return methodNotAllowed("POST");
  const outcome = await sendAgain(parseId(request, params.id, "That message"));
  return outcome.ok ? Response.json(outcome.row) : apiError(outcome.status, outcome.code, outcome.message);
}

export function loader() {
  return methodNotAllowed("POST");
}
