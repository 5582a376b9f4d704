import type { Route } from "./+types/calibrations";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, readJson } from "~/.server/http";
import { createCalibration } from "~/.server/calibrations";
import { listCalibrations, serializeCalibrations } from "~/.server/calibration-views";
import { invalidInput, methodNotAllowed, refusalResponse } from "~/.server/api-responses";
import { calibrationApiSchema, calibrationFilterSchema } from "~/lib/validation/calibrations";
import { calibrationMatches } from "~/lib/validation/calibration-filters";

/** GET /api/v1/calibrations?equipmentId=&kind=&standing=&q= — every role reads the records; the filters are the page's. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireCapability(request, "read_calibrations");
  const params = new URL(request.url).searchParams;
  const parsed = calibrationFilterSchema.safeParse(Object.fromEntries(Object.keys(calibrationFilterSchema.shape).map((k) => [k, params.get(k) ?? undefined])));
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    return apiError(400, "invalid_filter", issue?.message ?? "The filter is not valid.", { field: String(issue?.path[0] ?? "") });
  }
  const { equipmentId, ...filters } = parsed.data;
  const records = await serializeCalibrations(await listCalibrations({ equipmentId }));
  return Response.json(records.filter((r) => calibrationMatches(r, filters)));
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
