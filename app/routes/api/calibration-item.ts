import type { Route } from "./+types/calibration-item";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, parseId, readJson } from "~/.server/http";
import { getCalibration, updateCalibration } from "~/.server/calibrations";
import { serializeCalibrations } from "~/.server/calibration-views";
import { invalidInput, methodNotAllowed, refusalResponse } from "~/.server/api-responses";
import { calibrationApiSchema } from "~/lib/validation/calibrations";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireCapability(request, "read_calibrations");
  const cal = await getCalibration(parseId(request, params.id, "That calibration record"));
  if (!cal) return apiError(404, "not_found", "No calibration record with that id.");
  const [view] = await serializeCalibrations([cal]);
  return Response.json(view);
}

/** PUT /api/v1/calibrations/:id — replaces a record not yet signed off; a signed one answers 409. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCapability(request, "record_calibration");
  if (request.method !== "PUT" && request.method !== "PATCH") return methodNotAllowed("GET, PUT");
  const id = parseId(request, params.id, "That calibration record");
  const parsed = calibrationApiSchema.safeParse(await readJson(request));
  if (!parsed.success) return invalidInput(parsed.error);
  try {
    const cal = await updateCalibration(id, parsed.data, user);
    const [view] = await serializeCalibrations([cal]);
    return Response.json(view);
  } catch (err) {
    return refusalResponse(err);
  }
}
