import { Run } from "../db";
import { apiError, isApiRequest, notFound, parseId } from "../http";
import { assertCanChange, RunError } from "./service";
import type { CurrentUser } from "../auth/permissions";
import { data } from "react-router";

/** Loads a run or throws the right 404 for a page or the API. */
export async function loadRun(request: Request, id: string | undefined) {
  const run = await Run.findByPk(parseId(request, id, "That run"));
  if (!run) throw notFound(request, "That run");
  return run;
}

/** Throws a JSON error (API) or an error page unless this person may change this run. */
export function requireChangeable(request: Request, run: Run, user: CurrentUser) {
  try {
    assertCanChange(run, user);
  } catch (err) {
    if (err instanceof RunError) {
      if (isApiRequest(request)) throw apiError(err.status, err.code, err.message);
      throw data(err.message, { status: err.status });
    }
    throw err;
  }
}
