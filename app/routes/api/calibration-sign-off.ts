import type { Route } from "./+types/calibration-sign-off";
import { requireCapability } from "~/.server/auth/permissions";
import { parseId } from "~/.server/http";
import { signOffCalibration } from "~/.server/calibrations";
import { serializeCalibrations } from "~/.server/calibration-views";
import { methodNotAllowed, refusalResponse } from "~/.server/api-responses";

/** POST /api/v1/calibrations/:id/sign-off — a lab manager's sign-off; a second one answers 409. */
export async function action({ request, params }: Route.ActionArgs) {
  const manager = await requireCapability(request, "sign_off_calibration");
  if (request.method !== "POST") return methodNotAllowed("POST");
  try {
    const cal = await signOffCalibration(parseId(request, params.id, "That calibration record"), manager);
    const [view] = await serializeCalibrations([cal]);
    return Response.json(view);
  } catch (err) {
    return refusalResponse(err);
  }
}

export function loader() {
  return methodNotAllowed("POST");
}
