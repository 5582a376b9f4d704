import type { Route } from "./+types/run";
import { requireRole, requireUser } from "~/.server/auth/permissions";
import { apiError, readJson } from "~/.server/http";
import { loadRun, requireChangeable } from "~/.server/runs/access";
import { getRunDetail } from "~/.server/runs/record";
import { updateRun } from "~/.server/runs/service";
import { runErrorResponse } from "~/.server/runs/api";
import { serializeRun } from "~/.server/runs/serialize";
import { invalidInput } from "~/.server/api-responses";
import { runApiPatchSchema } from "~/lib/validation/run-api";
import { runSchema } from "~/lib/validation/run";

/** GET /api/v1/runs/:id: the run with its equipment, frames, setup, tracking, check, calibrations and history. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.id);
  return Response.json(await getRunDetail(run.id));
}

/** PATCH /api/v1/runs/:id: change some conditions; a signed-off run answers 409 and stays as it is. */
export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "PATCH") return apiError(405, "method_not_allowed", "Use PATCH to change a run.");
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, params.id);
  await requireChangeable(request, run, user);
  const patch = runApiPatchSchema.safeParse(await readJson(request));
  if (!patch.success) return invalidInput(patch.error);
  // The stored run in the form's units (cm), with the change laid over it, checked as a whole.
  const current = {
    tableId: run.tableId,
    tankId: run.tankId,
    cameraId: run.cameraId,
    setRateRpm: run.setRateRpm,
    direction: run.direction,
    waterDepthCm: Math.round(run.waterDepthM * 100 * 1e6) / 1e6,
    waterTemperatureC: run.waterTemperatureC,
    rateReachedAt: run.rateReachedAt ?? undefined,
    cameraMode: run.cameraMode,
    frameRateFps: run.frameRateFps,
    tracer: run.tracer,
    purpose: run.purpose,
    notes: run.notes ?? undefined,
  };
  const merged = runSchema.safeParse({ ...current, ...patch.data });
  if (!merged.success) return invalidInput(merged.error);
  try {
    const updated = await updateRun(run.id, merged.data, user);
    return Response.json(serializeRun(updated));
  } catch (err) {
    return runErrorResponse(err);
  }
}
