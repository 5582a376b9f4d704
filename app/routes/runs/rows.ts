import { data } from "react-router";
import type { Route } from "./+types/rows";
import { requireUser } from "~/.server/auth/permissions";
import { listRuns, RunFilterError, runFiltersFrom } from "~/.server/runs/queries";

/** One page of the runs table for the page's fetcher: the same filters as the page's own address. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  try {
    return { page: await listRuns(runFiltersFrom(new URL(request.url).searchParams)), error: null };
  } catch (err) {
    if (err instanceof RunFilterError) return data({ page: null, error: { message: err.message, field: err.field } }, { status: 400 });
    throw err;
  }
}
