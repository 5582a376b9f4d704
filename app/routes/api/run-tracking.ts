import type { Route } from "./+types/run-tracking";
import { requireRole, requireUser } from "~/.server/auth/permissions";
import { apiError } from "~/.server/http";
import { loadRun, requireChangeable } from "~/.server/runs/access";
import { cancelTracking, enqueueTracking, JobError, latestJob, serializeJob } from "~/.server/jobs/tracking-queue";
import { Track } from "~/.server/db";
import type { TrackingView } from "~/.server/openapi/responses/tracking";
import { checkAwaited } from "~/.server/runs/current-check";

/** GET: the latest tracking job's progress and the tracks found. Polled by the run page. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = await loadRun(request, params.runId);
  const [job, tracks] = await Promise.all([
    latestJob(run.id),
    Track.findAll({ where: { runId: run.id }, attributes: ["id", "number", "pointCount", "detectedShare", "jitterPx"], order: [["number", "ASC"]] }),
  ]);
  const view: TrackingView = {
    runId: run.id,
    runState: run.state,
    job: serializeJob(job),
    checkAwaited: await checkAwaited(run, job),
    tracks: tracks.map((t) => ({ id: t.id, number: t.number, points: t.pointCount, detectedShare: t.detectedShare, jitterPx: t.jitterPx })),
  };
  return Response.json(view);
}

/** POST starts a tracking job; DELETE cancels the queued or running one. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, params.runId);
  await requireChangeable(request, run, user);
  try {
    if (request.method === "POST") {
      const job = await enqueueTracking(run, user.id);
      return Response.json({ job: serializeJob(job) }, { status: 202 });
    }
    if (request.method === "DELETE") {
      const job = await cancelTracking(run.id);
      await job.reload();
      return Response.json({ job: serializeJob(job) });
    }
    return apiError(405, "method_not_allowed", "Use POST to start tracking or DELETE to cancel it.");
  } catch (err) {
    if (err instanceof JobError) return apiError(err.status, err.code, err.message);
    throw err;
  }
}
