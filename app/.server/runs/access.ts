import { Run, User } from "../db";
import { apiError, isApiRequest, notFound, parseId } from "../http";
import { assertCanChange, RunError } from "./service";
import type { CurrentUser } from "../auth/permissions";
import { data } from "react-router";
import { runLabel } from "~/lib/runs";
import type { ErrorPageReason } from "~/lib/error-page";

/** Loads a run or throws the right 404 for a page or the API. */
export async function loadRun(request: Request, id: string | undefined) {
  const run = await Run.findByPk(parseId(request, id, "That run"));
  if (!run) throw notFound(request, "That run");
  return run;
}

/**
 * Throws a JSON error (API) or an error page unless this person may change this run. A technician
 * turned away from another technician's run is told whose it is: their role is not the reason.
 */
export async function requireChangeable(request: Request, run: Run, user: CurrentUser) {
  try {
    assertCanChange(run, user);
  } catch (err) {
    if (err instanceof RunError) {
      if (isApiRequest(request)) throw apiError(err.status, err.code, err.message);
      if (err.status === 403 && user.role === "technician" && run.technicianId !== user.id) {
        const owner = await User.findByPk(run.technicianId, { attributes: ["name"] });
        const reason: ErrorPageReason = {
          title: `${runLabel(run.id)} is ${owner?.name ?? "another technician"}'s run`,
          message: `Only the technician who logged a run, or a lab manager, changes it. You can still open ${runLabel(run.id)} and read everything on it.`,
          link: { to: `/runs/${run.id}`, label: `Open ${runLabel(run.id)}` },
        };
        throw data(reason, { status: 403 });
      }
      throw data(err.message, { status: err.status });
    }
    throw err;
  }
}
