import { Form, data, redirect, useNavigation } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import { useState } from "react";
import type { Route } from "./+types/edit";
import { readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { listEquipment, serializeEquipment } from "~/.server/equipment";
import { createRun, RunError, RunValidationError, updateRun } from "~/.server/runs/service";
import { loadRun, requireChangeable } from "~/.server/runs/access";
import { carryOverSummary, type CarryOverSummary } from "~/.server/runs/correction";
import { getLabSettings } from "~/.server/settings";
import { useLabTime } from "~/components/lab-time";
import { fromZonedInput, toZonedInput } from "~/lib/time-format";
import { runSchema } from "~/lib/validation/run";
import { numberOrNull } from "~/lib/number-input";
import { cameraModeLabels, directionLabels, runLabel, tracerLabels } from "~/lib/runs";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { SelectField, TextAreaField, TextField } from "~/components/ui/field";
import { Notice, FormProblem } from "~/components/ui/notice";
import { RunConditionsPanel } from "~/components/run-conditions-panel";
import { formatCentimetres, formatNumber } from "~/lib/number-format";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.run ? `Edit ${runLabel(data.run.id)}` : "Log a run"} · Tankside` }];

/** One module for /runs/new (log a run, or a correction with ?supersedes=) and /runs/:id/edit. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "technician", "lab_manager");
  const equipment = (await listEquipment({ inServiceOnly: true })).map(serializeEquipment);
  const settings = await getLabSettings();
  const url = new URL(request.url);
  let run = null;
  let template = null;
  let carryOver = null;
  if (params.id) {
    const found = await loadRun(request, params.id);
    await requireChangeable(request, found, user);
    run = found.get({ plain: true });
  } else if (url.searchParams.get("supersedes")) {
    const old = await loadRun(request, url.searchParams.get("supersedes") ?? undefined);
    if (old.state !== "signed_off") {
      throw data(`${runLabel(old.id)} is not signed off: change it instead of logging a correction (a correction follows a signed-off run).`, { status: 409 });
    }
    template = old.get({ plain: true });
    carryOver = await carryOverSummary(old);
  }
  return { equipment, run, template, carryOver, spinUpTimesToWait: settings.spinUpTimesToWait };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "technician", "lab_manager");
  const submission = parseWithZod(await readForm(request), { schema: runSchema });
  if (submission.status !== "success") return data(submission.reply(), { status: 400 });
  try {
    if (params.id) {
      const run = await loadRun(request, params.id);
      await requireChangeable(request, run, user);
      await updateRun(run.id, submission.value, user);
      return redirect(`/runs/${run.id}`);
    }
    const run = await createRun(submission.value, user);
    return redirect(`/runs/${run.id}`);
  } catch (err) {
    if (err instanceof RunValidationError) {
      const fieldErrors: Record<string, string[]> = {};
      for (const p of err.problems) (fieldErrors[p.field] ??= []).push(p.message);
      return data(submission.reply({ fieldErrors }), { status: 400 });
    }
    if (err instanceof RunError) return data(submission.reply({ formErrors: [err.message] }), { status: err.status });
    throw err;
  }
}

type Choice = { value: string; label: string };
function Choices({
  name,
  legend,
  choices,
  defaultValue,
  error,
  onChange,
}: {
  name: string;
  legend: string;
  choices: Choice[];
  defaultValue?: string;
  error?: string[];
  onChange?: (v: string) => void;
}) {
  return (
    <fieldset className="flex flex-col gap-2">
      <legend className="mb-1 font-bold">{legend}</legend>
      {choices.map((c) => (
        <label
          key={c.value}
          className="flex min-h-12 cursor-pointer items-center gap-3 rounded-lg border-2 border-line px-3 has-[:checked]:border-tank-600 has-[:checked]:bg-tank-50"
        >
          <input type="radio" name={name} value={c.value} defaultChecked={defaultValue === c.value} className="h-5 w-5" onChange={() => onChange?.(c.value)} />
          {c.label}
        </label>
      ))}
      {error?.length ? (
        <p className="text-sm font-bold text-disagrees-ink" role="alert">
          {error[0]}
        </p>
      ) : null}
    </fieldset>
  );
}

/** What a correction starts with, said before it is logged, and the choice to bring new frames instead. */
function CarriedOver({ from, summary, leaveOutError }: { from: string; summary: CarryOverSummary; leaveOutError?: string[] }) {
  const time = useLabTime();
  return (
    <section aria-labelledby="carried-over-title" className="rounded-lg border-2 border-line p-4" data-testid="carried-over">
      <h2 id="carried-over-title" className="mb-2 font-bold">
        Carried over from {from}
      </h2>
      <ul className="mb-3 list-disc pl-5">
        <li>
          Frames: {summary.frames}
          {summary.frames ? ` (stored once, shared with ${from}; no upload needed)` : " (it has none)"}
        </li>
        <li>View setup: {summary.viewSetup ? "the same centre, tank edge and scale" : `none (${from} has no view setup)`}</li>
        <li>Rate reached at: {summary.rateReachedAt ? time.dateTime(summary.rateReachedAt) : "not given"} (the field below; change it if it was wrong)</li>
      </ul>
      <p className="mb-3 text-sm">
        {summary.frames >= 3 && summary.viewSetup
          ? "The new run is tracked and checked as soon as it is logged. Each of these can be changed on the new run afterwards."
          : "Each of these can be changed on the new run afterwards."}
      </p>
      {summary.frames ? (
        <label className="flex min-h-12 items-center gap-3 font-bold">
          <input type="checkbox" name="leaveFramesOut" className="h-6 w-6" />
          Leave the frames out: I will upload new ones
        </label>
      ) : null}
      {leaveOutError?.length ? (
        <p className="text-sm font-bold text-disagrees-ink" role="alert">
          {leaveOutError[0]}
        </p>
      ) : null}
    </section>
  );
}

export default function RunForm({ loaderData, actionData }: Route.ComponentProps) {
  const time = useLabTime();
  const { equipment, run, template, carryOver } = loaderData;
  const source = run ?? template;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData,
    ...formCheck(runSchema),
  });
  const tables = equipment.filter((e) => e.kind === "table");
  const tanks = equipment.filter((e) => e.kind === "tank");
  const cameras = equipment.filter((e) => e.kind === "camera");
  const [live, setLive] = useState({
    tableId: String(source?.tableId ?? tables[0]?.id ?? ""),
    tankId: String(source?.tankId ?? tanks[0]?.id ?? ""),
    rpm: String(source?.setRateRpm ?? ""),
    direction: source?.direction ?? "ccw",
    depthCm: source ? String(Number((source.waterDepthM * 100).toPrecision(6))) : "",
    temperatureC: String(source?.waterTemperatureC ?? ""),
    rateReachedAt: source ? toZonedInput(source.rateReachedAt, time.zone) : "",
  });
  const [reachedIso, setReachedIso] = useState(source?.rateReachedAt ? new Date(source.rateReachedAt).toISOString() : "");
  const table = tables.find((t) => String(t.id) === live.tableId) ?? null;
  const tank = tanks.find((t) => String(t.id) === live.tankId) ?? null;
  const title = run ? `Edit ${runLabel(run.id)}` : template ? `Log a correction of ${runLabel(template.id)}` : "Log a run";

  return (
    <div>
      <PageHeader title={title} subtitle="The conditions that matter for the theory check. Lengths in cm, rates in rpm." />
      {template ? (
        <div className="mb-4">
          <Notice kind="info" title={`This run corrects ${runLabel(template.id)}`}>
            The conditions are copied from it; change what was wrong. Both runs will show the link.
          </Notice>
        </div>
      ) : null}
      <div className="grid gap-6 xl:grid-cols-[1.6fr_1fr]">
        <Card>
          <Form method="post" className="grid gap-5 md:grid-cols-2" {...getFormProps(form)}>
            <FormProblem errors={form.errors} className="md:col-span-2" />
            {template ? <input type="hidden" name="supersedesId" value={template.id} /> : null}
            {template && carryOver ? (
              <div className="md:col-span-2">
                <CarriedOver from={runLabel(template.id)} summary={carryOver} leaveOutError={fields.leaveFramesOut.errors} />
              </div>
            ) : null}
            <SelectField
              label="Table"
              name="tableId"
              defaultValue={live.tableId}
              error={fields.tableId.errors}
              onChange={(e) => setLive({ ...live, tableId: e.target.value })}
              choices={tables.map((t) => ({ value: t.id, label: `${t.name} (up to ${formatNumber(t.maxRateRpm, 6)} rpm)` }))}
            />
            <SelectField
              label="Tank"
              name="tankId"
              defaultValue={live.tankId}
              error={fields.tankId.errors}
              onChange={(e) => setLive({ ...live, tankId: e.target.value })}
              choices={tanks.map((t) => ({ value: t.id, label: `${t.name} (${formatCentimetres(t.diameterM)} × ${formatCentimetres(t.depthM)})` }))}
            />
            <SelectField
              label="Camera"
              name="cameraId"
              defaultValue={String(source?.cameraId ?? cameras[0]?.id ?? "")}
              error={fields.cameraId.errors}
              choices={cameras.map((c) => ({
                value: c.id,
                label: `${c.name} (${c.resolutionWidthPx}×${c.resolutionHeightPx}, ${formatNumber(c.nominalFrameRateFps, 6)} frames/s)`,
              }))}
            />
            <TextField
              label="Set rate"
              name="setRateRpm"
              unit="rpm"
              inputMode="decimal"
              defaultValue={live.rpm}
              error={fields.setRateRpm.errors}
              onChange={(e) => setLive({ ...live, rpm: e.target.value })}
            />
            <Choices
              name="direction"
              legend="Direction"
              defaultValue={live.direction}
              error={fields.direction.errors}
              onChange={(v) => setLive({ ...live, direction: v as "ccw" | "cw" })}
              choices={[
                { value: "ccw", label: directionLabels.ccw },
                { value: "cw", label: directionLabels.cw },
              ]}
            />
            <Choices
              name="cameraMode"
              legend="Camera position"
              defaultValue={source?.cameraMode ?? "rotating"}
              error={fields.cameraMode.errors}
              choices={[
                { value: "rotating", label: cameraModeLabels.rotating },
                { value: "lab", label: cameraModeLabels.lab },
              ]}
            />
            <TextField
              label="Water depth (at rest)"
              name="waterDepthCm"
              unit="cm"
              inputMode="decimal"
              defaultValue={live.depthCm}
              error={fields.waterDepthCm.errors}
              onChange={(e) => setLive({ ...live, depthCm: e.target.value })}
            />
            <TextField
              label="Water temperature"
              name="waterTemperatureC"
              unit="°C"
              inputMode="decimal"
              defaultValue={live.temperatureC}
              error={fields.waterTemperatureC.errors}
              onChange={(e) => setLive({ ...live, temperatureC: e.target.value })}
            />
            <div className="flex flex-col gap-1">
              <TextField
                label="Table reached its rate at"
                name="rateReachedAtLocal"
                type="datetime-local"
                defaultValue={live.rateReachedAt}
                error={fields.rateReachedAt.errors}
                hint={`Spin-up is counted from here. Lab time (${time.zone}).`}
                onChange={(e) => {
                  setLive({ ...live, rateReachedAt: e.target.value });
                  // The field is on the lab's clock, whatever the browser's zone.
                  setReachedIso(fromZonedInput(e.target.value, time.zone)?.toISOString() ?? "");
                }}
              />
              <input type="hidden" name="rateReachedAt" value={reachedIso} />
            </div>
            <TextField
              label="Frame rate"
              name="frameRateFps"
              unit="frames/s"
              inputMode="decimal"
              defaultValue={String(source?.frameRateFps ?? cameras[0]?.nominalFrameRateFps ?? "")}
              error={fields.frameRateFps.errors}
            />
            <Choices
              name="tracer"
              legend="Tracer"
              defaultValue={source?.tracer ?? "float"}
              error={fields.tracer.errors}
              choices={[
                { value: "float", label: `${tracerLabels.float} (bright spot on the surface)` },
                { value: "dye", label: `${tracerLabels.dye} (coloured patch)` },
              ]}
            />
            <div className="md:col-span-2">
              <TextField
                label="Purpose"
                name="purpose"
                maxLength={300}
                defaultValue={source?.purpose ?? ""}
                error={fields.purpose.errors}
                placeholder="e.g. Inertial circles demonstration for the second-year class"
              />
            </div>
            <div className="md:col-span-2">
              <TextAreaField label="Notes" name="notes" defaultValue={source?.notes ?? ""} error={fields.notes.errors} />
            </div>
            <div className="md:col-span-2">
              <Button type="submit" disabled={navigation.state === "submitting"}>
                {run ? "Save changes" : "Log the run"}
              </Button>
            </div>
          </Form>
        </Card>
        <RunConditionsPanel
          rpm={numberOrNull(live.rpm) ?? Number.NaN}
          direction={live.direction}
          depthCm={numberOrNull(live.depthCm) ?? Number.NaN}
          temperatureC={numberOrNull(live.temperatureC) ?? Number.NaN}
          tankRadiusM={tank?.diameterM ? tank.diameterM / 2 : null}
          tankDepthM={tank?.depthM ?? null}
          tableMaxRpm={table?.maxRateRpm ?? null}
          rateReachedAt={live.rateReachedAt ? new Date(live.rateReachedAt) : null}
          spinUpTimesToWait={loaderData.spinUpTimesToWait}
        />
      </div>
    </div>
  );
}
