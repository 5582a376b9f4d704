import { data } from "react-router";
import type { Route } from "./+types/frames-remove";
import { parseId, readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { RunError } from "~/.server/runs/service";
import { removeFrameSelection } from "~/.server/runs/frame-removal";
import { frameRemovalSchema, selectionOf } from "~/lib/validation/frame-removal";
import { formText } from "~/lib/form-text";

/**
 * POST /runs/:id/frames/remove (the run's technician, lab manager): the frame viewer's removal,
 * after its confirmation. The form names frames as people count them (1 = the first frame).
 */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "technician", "lab_manager");
  const runId = parseId(request, params.id, "That run");
  const form = await readForm(request);
  if (formText(form, "confirm") !== "yes") {
    return data(
      { ok: false as const, message: "Confirm the removal first: removed frames cannot be brought back except by uploading them again." },
      { status: 400 },
    );
  }
  const frameNumber = (name: string) => {
    const text = formText(form, name).trim();
    return /^\d+$/.test(text) ? Number(text) - 1 : text;
  };
  const input =
    formText(form, "all") === "yes"
      ? { all: true, frameCount: formText(form, "frameCount") || undefined }
      : { from: frameNumber("first"), to: frameNumber("last"), frameCount: formText(form, "frameCount") || undefined };
  const parsed = frameRemovalSchema.safeParse(input);
  if (!parsed.success) {
    const message = parsed.error.issues.map((i) => i.message.replace(/position/g, "frame")).join(" ");
    return data({ ok: false as const, message }, { status: 400 });
  }
  try {
    const result = await removeFrameSelection(runId, user, selectionOf(parsed.data), { frameCount: parsed.data.frameCount });
    const what = result.removed.length === 1 ? "1 frame" : `${result.removed.length} frames`;
    const next = result.retracking
      ? "The run is being tracked again; the theory check follows."
      : result.frameCount === 0
        ? "The stack is empty: bring the frames again when ready."
        : "The theory check is out of date until the run is tracked again.";
    return { ok: true as const, message: `Removed ${what}; ${result.frameCount} left. ${next}` };
  } catch (err) {
    if (err instanceof RunError) {
      if (err.status === 404) throw data(err.message, { status: 404 });
      return data({ ok: false as const, message: err.message }, { status: err.status });
    }
    throw err;
  }
}
