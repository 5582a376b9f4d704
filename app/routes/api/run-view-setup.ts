import type { Route } from "./+types/run-view-setup";
import { requireRole } from "~/.server/auth/permissions";
import { apiError, readJson } from "~/.server/http";
import { invalidInput, methodNotAllowed } from "~/.server/api-responses";
import { loadRun, requireChangeable } from "~/.server/runs/access";
import { serializeViewSetup } from "~/.server/runs/serialize";
import { marksOutsideFrame, saveViewSetup, setupRowOf } from "~/.server/runs/view-setup";
import { ViewSetup } from "~/.server/db";
import { viewSetupSchema } from "~/lib/validation/view-setup";
import { apiFieldOfFormField, formFieldsOfApiBody, viewSetupApiSchema } from "~/lib/validation/view-setup-api";

/** The marks' own refusals (422): each message on the API's field, in the order the checks found them. */
function notUsable(byField: Record<string, string[] | undefined>): Response {
  const issues = Object.entries(byField).flatMap(([field, messages]) =>
    (messages ?? []).map((message) => ({ field: apiFieldOfFormField[field] ?? field, message })),
  );
  const messages = [...new Set(issues.map((i) => i.message))];
  return apiError(422, "setup_not_usable", messages.join(" ") || "The view setup cannot be used.", { issues });
}

/**
 * PUT /api/v1/runs/:id/view-setup (the run's technician or a lab manager): the whole view setup,
 * checked as the setup page checks it. 400 when the body is not the setup's shape, 422 when it is
 * but its marks are refused (outside the frame, too few or repeated tilt points, points in a line),
 * 409 for a run without frames or signed off. A refusal leaves the saved setup as it was.
 */
export async function action({ request, params }: Route.ActionArgs) {
  if (request.method !== "PUT") return methodNotAllowed("PUT");
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, params.id);
  await requireChangeable(request, run, user);
  const body = viewSetupApiSchema.safeParse(await readJson(request));
  if (!body.success) return invalidInput(body.error);
  if (!run.frameWidthPx || !run.frameHeightPx) return apiError(409, "no_frames", "Bring the frames first; the view is set up in a frame's pixels.");
  const checked = viewSetupSchema.safeParse(formFieldsOfApiBody(body.data));
  if (!checked.success) {
    const byField: Record<string, string[]> = {};
    for (const issue of checked.error.issues) (byField[String(issue.path[0] ?? "")] ??= []).push(issue.message);
    return notUsable(byField);
  }
  const outside = marksOutsideFrame(run, checked.data);
  if (Object.keys(outside).length) return notUsable(outside);
  await saveViewSetup(run, setupRowOf(run, checked.data, user.id), user.id);
  return Response.json(serializeViewSetup(await ViewSetup.findOne({ where: { runId: run.id } })));
}

export function loader() {
  return methodNotAllowed("PUT");
}
