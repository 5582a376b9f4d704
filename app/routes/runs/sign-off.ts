import { data, redirect } from "react-router";
import type { Route } from "./+types/sign-off";
import { parseId, readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { RunError } from "~/.server/runs/service";
import { signOffRun } from "~/.server/runs/record";

/** POST /runs/:id/sign-off (lab manager): signs a checked run off; afterwards it is read-only everywhere. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "lab_manager");
  const runId = parseId(request, params.id, "That run");
  const form = await readForm(request);
  if (form.get("confirm") !== "yes") {
    return data({ ok: false as const, message: "Tick the box to confirm you have checked the run before signing it off." }, { status: 400 });
  }
  try {
    await signOffRun(runId, user);
  } catch (err) {
    if (err instanceof RunError) {
      if (err.status === 404) throw data(err.message, { status: 404 });
      return data({ ok: false as const, message: err.message }, { status: err.status });
    }
    throw err;
  }
  const back = form.get("redirectTo");
  // Without JavaScript the form posts here directly: send the person back to the record they signed.
  if (typeof back === "string" && back.startsWith(`/runs/${runId}`)) throw redirect(back);
  return { ok: true as const, message: "Signed off. The run is now read-only." };
}
