import type { Route } from "./+types/overlay";
import { requireUser } from "~/.server/auth/permissions";
import { apiError, notFound } from "~/.server/http";
import { loadRun } from "~/.server/runs/access";
import { latestJob } from "~/.server/jobs/tracking-queue";
import { trackOverlay } from "~/.server/runs/overlay";
import { MissingObjectError, StorageUnavailableError } from "~/.server/storage";
import { storageUnavailable } from "~/.server/storage/respond";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.id);
  const job = await latestJob(run.id);
  if (!job || job.state !== "done") throw notFound(request, "A tracked frame for this run");
  let png: Buffer | null;
  try {
    png = await trackOverlay(run.id, job.id);
  } catch (err) {
    if (err instanceof MissingObjectError) {
      return apiError(
        404,
        "file_missing",
        "The file of the frame the tracks are drawn on is missing from storage. Bring the same frames again to put it back.",
      );
    }
    if (err instanceof StorageUnavailableError) return storageUnavailable(err);
    throw err;
  }
  if (!png) throw notFound(request, "A tracked frame for this run");
  return new Response(new Uint8Array(png), {
    headers: { "Content-Type": "image/png", "Cache-Control": "private, max-age=3600" },
  });
}
