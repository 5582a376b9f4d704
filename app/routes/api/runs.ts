import type { Route } from "./+types/runs";
import { requireRole, requireUser } from "~/.server/auth/permissions";
import { apiError, readJson } from "~/.server/http";
import { listRuns, runFiltersFrom } from "~/.server/runs/queries";
import { createRun } from "~/.server/runs/service";
import { runErrorResponse } from "~/.server/runs/api";
import { serializeRun } from "~/.server/runs/serialize";
import { invalidInput } from "~/.server/api-responses";
import { runApiCreateSchema } from "~/lib/validation/run-api";

/** GET /api/v1/runs: the runs table's filters, sort and paging as query parameters. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  try {
    const page = await listRuns(runFiltersFrom(new URL(request.url).searchParams));
    return Response.json(page);
  } catch (err) {
    return runErrorResponse(err);
  }
}

/** POST /api/v1/runs: log a run (technician or lab manager), the same fields as the run log form. */
export async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return apiError(405, "method_not_allowed", "Use POST to log a run; GET to list them.");
  const user = await requireRole(request, "technician", "lab_manager");
  const body = await readJson(request);
  const parsed = runApiCreateSchema.safeParse(body);
  if (!parsed.success) return invalidInput(parsed.error);
  try {
    const run = await createRun(parsed.data, user);
    return Response.json(serializeRun(run), { status: 201, headers: { Location: `/api/v1/runs/${run.id}` } });
  } catch (err) {
    return runErrorResponse(err);
  }
}
