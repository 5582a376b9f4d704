import type { Route } from "./+types/calibration-sign-off";
import { requireRole } from "~/.server/auth/permissions";
import { serializeCalibrations, signOffCalibration } from "~/.server/calibrations";
import { methodNotAllowed, refusalResponse } from "~/.server/api-responses";

/** POST /api/v1/calibrations/:id/sign-off — a lab manager's sign-off; a second one answers 409. */
export async function action({ request, params }: Route.ActionArgs) {
  const manager = await requireRole(request, "lab_manager");
  if (request.method !== "POST") return methodNotAllowed("POST");
  try {
    const cal = await signOffCalibration(Number(params.id), manager);
    const [view] = await serializeCalibrations([cal]);
    return Response.json(view);
  } catch (err) {
    return refusalResponse(err);
  }
}

export function loader() {
  return methodNotAllowed("POST");
}
