import fs from "node:fs/promises";
import type { Route } from "./+types/overlay";
import { requireUser } from "~/.server/auth/permissions";
import { notFound } from "~/.server/http";
import { loadRun } from "~/.server/runs/access";
import { latestJob } from "~/.server/jobs/tracking-queue";
import { trackOverlay } from "~/.server/runs/overlay";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.id);
  const job = await latestJob(run.id);
  if (!job || job.state !== "done") throw notFound(request, "A tracked frame for this run");
  const file = await trackOverlay(run.id, job.id);
  if (!file) throw notFound(request, "A tracked frame for this run");
  return new Response(new Uint8Array(await fs.readFile(file)), {
    headers: { "Content-Type": "image/png", "Cache-Control": "private, max-age=3600" },
  });
}
