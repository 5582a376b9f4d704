import type { z } from "zod";
import type { Run } from "../db";
import { apiError } from "../http";
import { RunError, RunValidationError } from "./service";
import { RunFilterError } from "./queries";
import { runLabel } from "~/lib/runs";

/** The run as POST/PATCH /api/v1/runs answer it: stored columns, SI units as named. */
export function serializeRun(run: Run) {
  return {
    id: run.id,
    label: runLabel(run.id),
    state: run.state,
    verdict: run.verdict,
    tableId: run.tableId,
    tankId: run.tankId,
    cameraId: run.cameraId,
    setRateRpm: run.setRateRpm,
    direction: run.direction,
    waterDepthM: run.waterDepthM,
    waterTemperatureC: run.waterTemperatureC,
    rateReachedAt: run.rateReachedAt?.toISOString() ?? null,
    cameraMode: run.cameraMode,
    frameRateFps: run.frameRateFps,
    tracer: run.tracer,
    purpose: run.purpose,
    notes: run.notes,
    technicianId: run.technicianId,
    supersedesId: run.supersedesId,
    signedOffById: run.signedOffById,
    signedOffAt: run.signedOffAt?.toISOString() ?? null,
    frameCount: run.frameCount,
    createdAt: run.createdAt.toISOString(),
    updatedAt: run.updatedAt.toISOString(),
  };
}

/** 422 with one message per field, in the body's own field names. */
export function fieldErrors(error: z.ZodError) {
  const fields: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.code === "unrecognized_keys" ? issue.keys.join(", ") : issue.path.join(".") || "body";
    fields[key] ??= issue.code === "unrecognized_keys" ? `Unknown field${issue.keys.length > 1 ? "s" : ""}: ${issue.keys.join(", ")}.` : issue.message;
  }
  return apiError(422, "invalid_run", Object.values(fields).join(" "), { fields });
}

/** Turns the run services' known errors into the API's error shape; anything else is rethrown. */
export function runErrorResponse(err: unknown): Response {
  if (err instanceof RunValidationError) {
    return apiError(422, "invalid_run", err.message, { fields: Object.fromEntries(err.problems.map((p) => [p.field, p.message])) });
  }
  if (err instanceof RunFilterError) return apiError(400, err.code, err.message, err.field ? { field: err.field } : undefined);
  if (err instanceof RunError) return apiError(err.status, err.code, err.message, err.field ? { fields: { [err.field]: err.message } } : undefined);
  throw err;
}
