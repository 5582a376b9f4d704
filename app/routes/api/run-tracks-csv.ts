import type { Route } from "./+types/run-tracks-csv";
import { requireUser } from "~/.server/auth/permissions";
import { loadRun } from "~/.server/runs/access";
import { tracksCsv } from "~/.server/runs/exports";
import { runErrorResponse } from "~/.server/runs/api";

/** GET /api/v1/runs/:id/tracks.csv: every track's points; 409 when the run has no tracks yet. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.id);
  try {
    const { filename, csv } = await tracksCsv(run.id);
    return new Response(csv, {
      headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${filename}"` },
    });
  } catch (err) {
    return runErrorResponse(err);
  }
}
