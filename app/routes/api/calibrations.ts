import type { Route } from "./+types/calibrations";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, readJson } from "~/.server/http";
import { createCalibration, listCalibrations, serializeCalibrations } from "~/.server/calibrations";
import { invalidInput, methodNotAllowed, refusalResponse } from "~/.server/api-responses";
import { calibrationApiSchema, calibrationFilterSchema } from "~/lib/validation/calibrations";

/** GET /api/v1/calibrations?equipmentId= — every role reads the records. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireCapability(request, "read_calibrations");
  const parsed = calibrationFilterSchema.safeParse({ equipmentId: new URL(request.url).searchParams.get("equipmentId") ?? undefined });
  if (!parsed.success) return apiError(400, "invalid_filter", parsed.error.issues[0]?.message ?? "The filter is not valid.", { field: "equipmentId" });
  return Response.json(await serializeCalibrations(await listCalibrations({ equipmentId: parsed.data.equipmentId })));
}

/** POST /api/v1/calibrations — technicians and lab managers record calibrations. */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireCapability(request, "record_calibration");
  if (request.method !== "POST") return methodNotAllowed("GET, POST");
  const parsed = calibrationApiSchema.safeParse(await readJson(request));
  if (!parsed.success) return invalidInput(parsed.error);
  try {
    const cal = await createCalibration(parsed.data, user);
    const [view] = await serializeCalibrations([cal]);
    return Response.json(view, { status: 201, headers: { Location: `/api/v1/calibrations/${cal.id}` } });
  } catch (err) {
    return refusalResponse(err);
  }
}
