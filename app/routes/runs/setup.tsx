import { Form, data, redirect } from "react-router";
import { parseWithZod } from "@conform-to/zod/v4";
import type { Route } from "./+types/setup";
import { readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { Frame, ViewSetup } from "~/.server/db";
import { loadRun, requireChangeable } from "~/.server/runs/access";
import { scaleCalibrationOfRun } from "~/.server/runs/applied-calibrations";
import { formatNumber } from "~/lib/number-format";
import { marksOutsideFrame, saveViewSetup, setupRowOf } from "~/.server/runs/view-setup";
import { lastSetupOfCamera } from "~/.server/runs/setup-carry-over";
import { viewSetupSchema } from "~/lib/validation/view-setup";
import { runLabel } from "~/lib/runs";
import { parseKnownPoints, parseRimPoints } from "~/lib/projective/stored-marks";
import { Button, ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { ViewSetupEditor, type SetupValues } from "~/components/runs/view-setup-editor";
import { frameKey, store, StorageUnavailableError } from "~/.server/storage";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `View setup ${data ? runLabel(data.runId) : ""} · Tankside` }];

function toValues(s: ViewSetup): SetupValues {
  let scalePoints: SetupValues["scalePoints"] = null;
  try {
    scalePoints = s.scalePoints ? (JSON.parse(s.scalePoints) as SetupValues["scalePoints"]) : null;
  } catch {
    scalePoints = null;
  }
  const scalePx = scalePoints ? Math.hypot(scalePoints[0].x - scalePoints[1].x, scalePoints[0].y - scalePoints[1].y) : null;
  return {
    centre: { x: s.centreXPx, y: s.centreYPx },
    edge: s.tankEdgeRPx && s.tankEdgeXPx !== null && s.tankEdgeYPx !== null ? { cx: s.tankEdgeXPx, cy: s.tankEdgeYPx, r: s.tankEdgeRPx } : null,
    scalePoints,
    scaleLengthCm: scalePx && s.scalePxPerM ? Math.round((scalePx / s.scalePxPerM) * 100 * 1000) / 1000 : null,
    mirrored: s.mirrored,
    rateMark: s.rateMarkXPx !== null && s.rateMarkYPx !== null ? { x: s.rateMarkXPx, y: s.rateMarkYPx } : null,
    rimPoints: parseRimPoints(s.rimPoints) ?? [],
    knownPoints: parseKnownPoints(s.knownPoints) ?? [],
  };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, params.id);
  await requireChangeable(request, run, user);
  const count = await Frame.count({ where: { runId: run.id } });
  if (!count) throw data("Bring the frames first; the view is set up on one of them.", { status: 409 });
  const frame = await Frame.findOne({ where: { runId: run.id, position: 0 } });
  const own = await ViewSetup.findOne({ where: { runId: run.id } });
  // The same camera usually hangs in the same place: start from its last setup.
  const previous = own ? null : ((await lastSetupOfCamera(run.cameraId, { width: frame!.widthPx, height: frame!.heightPx }))?.setup ?? null);
  const start = own ?? previous;
  const scaleCalibration = await scaleCalibrationOfRun(run);
  // The marks are made on this frame's picture: say so plainly when its file is gone from storage.
  const imageMissing = await store()
    .head(frameKey(frame!))
    .then((o) => o === null)
    .catch((err) => {
      if (err instanceof StorageUnavailableError) return false;
      throw err;
    });
  return {
    imageMissing,
    scaleCalibration,
    runId: run.id,
    frame: { id: frame!.id, width: frame!.widthPx, height: frame!.heightPx },
    initial: start
      ? toValues(start)
      : { centre: null, edge: null, scalePoints: null, scaleLengthCm: null, mirrored: false, rateMark: null, rimPoints: [], knownPoints: [] },
    reusedFrom: previous ? previous.runId : null,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "technician", "lab_manager");
  const run = await loadRun(request, params.id);
  await requireChangeable(request, run, user);
  const submission = parseWithZod(await readForm(request), { schema: viewSetupSchema });
  if (submission.status !== "success") return data({ errors: submission.reply().error ?? {} }, { status: 400 });
  const v = submission.value;
  const errors = marksOutsideFrame(run, v);
  if (Object.keys(errors).length) return data({ errors }, { status: 400 });
  await saveViewSetup(run, setupRowOf(run, v, user.id), user.id);
  return redirect(`/runs/${run.id}#tracking`);
}

export default function Setup({ loaderData, actionData }: Route.ComponentProps) {
  const { runId, frame, initial, reusedFrom, scaleCalibration, imageMissing } = loaderData;
  const errors = (actionData?.errors ?? {}) as Record<string, string[] | undefined>;
  return (
    <div>
      <PageHeader
        title={`View setup · ${runLabel(runId)}`}
        subtitle="Mark the rotation centre, the tank edge, the scale and, with a lab-fixed camera, a mark on the table on the first frame; with a camera not quite overhead, points on the rim or marks whose place on the table you know."
        actions={<ButtonLink to={`/runs/${runId}`}>Back to the run</ButtonLink>}
      />
      {imageMissing ? (
        <div className="mb-4">
          <Notice kind="error" title="The first frame's file is missing from storage">
            Its picture cannot be shown to mark on. Bring the same frames again on the run's page to put the files back.
          </Notice>
        </div>
      ) : null}
      {reusedFrom ? (
        <div className="mb-4">
          <Notice kind="info" title={`Started from the last setup of this camera (${runLabel(reusedFrom)})`}>
            Check the marks still sit where they should before saving.
          </Notice>
        </div>
      ) : null}
      {scaleCalibration ? (
        <div className="mb-4">
          <Notice
            kind="info"
            title={`Scale calibration #${scaleCalibration.id} is in force for this camera: ${formatNumber(scaleCalibration.scalePxPerM / 100, 5)} px per cm`}
          >
            Leave the scale unmarked and the theory check uses it. A scale you mark here is kept, and flagged on the run when it differs from the calibration by
            more than {formatNumber(scaleCalibration.tolerancePct, 3)} %.
          </Notice>
        </div>
      ) : null}
      <Card>
        <Form method="post">
          <ViewSetupEditor imageUrl={`/runs/${runId}/frames/${frame.id}/image`} width={frame.width} height={frame.height} initial={initial} errors={errors} />
          <div className="mt-6">
            <Button type="submit">Save the view setup</Button>
          </div>
        </Form>
      </Card>
    </div>
  );
}
