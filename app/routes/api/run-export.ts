import type { Route } from "./+types/run-export";
import { requireUser } from "~/.server/auth/permissions";
import { loadRun } from "~/.server/runs/access";
import { getRunExport } from "~/.server/runs/record";
import { runLabel } from "~/lib/runs";

/** GET /api/v1/runs/:id/export.json: conditions, equipment, setup, calibrations, settings, result and code version. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.id);
  const body = await getRunExport(run.id);
  return new Response(JSON.stringify(body, null, 2), {
    headers: { "Content-Type": "application/json; charset=utf-8", "Content-Disposition": `attachment; filename="${runLabel(run.id)}.json"` },
  });
}
