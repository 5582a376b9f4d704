import { Form, data, redirect } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import { useState } from "react";
import type { Route } from "./+types/edit";
import { requireCapability } from "~/.server/auth/permissions";
import { notFound, parseId, readForm } from "~/.server/http";
import { CalibrationError, createCalibration, getCalibration, toDayString, updateCalibration } from "~/.server/calibrations";
import { serializeCalibrations } from "~/.server/calibration-views";
import { listEquipment } from "~/.server/equipment";
import { getLabSettings } from "~/.server/settings";
import { calibrationSchema } from "~/lib/validation/calibrations";
import { calibrationKindFor, calibrationKindLabels, calibrationKinds, intervalDaysFor, MIN_RATE_READINGS, type CalibrationKind } from "~/lib/calibrations";
import { Button, ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { choicesByName, choicesOf, SelectField, TextAreaField, TextField } from "~/components/ui/field";
import { Notice, FormProblem } from "~/components/ui/notice";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: `${data?.record ? `Edit calibration #${data.record.id}` : "Record a calibration"} · Tankside` },
];

const ROWS = 8;
/** A reading's cell; outlined in the error colour when its value is refused. */
const cell = "min-h-12 w-32 rounded-lg border-2 border-line-strong bg-sheet px-3 aria-[invalid=true]:border-4 aria-[invalid=true]:border-disagrees-ink";

/** One module for /calibrations/new and /calibrations/:id/edit (only while not signed off). */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireCapability(request, "record_calibration");
  const [items, settings] = await Promise.all([listEquipment(), getLabSettings()]);
  const url = new URL(request.url);
  let record = null;
  if (params.id) {
    const cal = await getCalibration(parseId(request, params.id, "That calibration record"));
    if (!cal) throw notFound(request, "That calibration record");
    [record] = await serializeCalibrations([cal]);
  }
  return {
    record,
    items: items
      .filter((i) => i.status !== "retired")
      .map((i) => ({ id: i.id, name: i.name, kind: i.kind, nominalFrameRateFps: i.nominalFrameRateFps, rateTolerancePct: i.rateTolerancePct })),
    intervals: { rate: intervalDaysFor("rate", settings), scale: intervalDaysFor("scale", settings), timing: intervalDaysFor("timing", settings) },
    preset: { equipmentId: url.searchParams.get("equipmentId") ?? "", kind: url.searchParams.get("kind") ?? "" },
    today: toDayString(new Date(), settings.timeZone),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCapability(request, "record_calibration");
  const id = params.id === undefined ? undefined : parseId(request, params.id, "That calibration record");
  const submission = parseWithZod(await readForm(request), { schema: calibrationSchema });
  if (submission.status !== "success") return data(submission.reply(), { status: 400 });
  try {
    const cal = id ? await updateCalibration(id, submission.value, user) : await createCalibration(submission.value, user);
    return redirect(`/calibrations/${cal.id}`);
  } catch (err) {
    if (err instanceof CalibrationError) {
      const reply =
        err.field && err.field in submission.value
          ? submission.reply({ fieldErrors: { [err.field]: [err.message] } })
          : submission.reply({ formErrors: [err.message] });
      return data(reply, { status: err.status });
    }
    throw err;
  }
}

type Row = { setRpm?: string; measuredRpm?: string };

export default function EditCalibration({ loaderData, actionData }: Route.ComponentProps) {
  const { record, items } = loaderData;
  const signed = Boolean(record?.signedOffAt);
  const presetKind = (calibrationKinds as readonly string[]).includes(loaderData.preset.kind) ? (loaderData.preset.kind as CalibrationKind) : undefined;
  const presetItem = items.find((i) => String(i.id) === loaderData.preset.equipmentId);
  const initialKind: CalibrationKind = record?.kind ?? presetKind ?? (presetItem?.kind === "camera" ? "scale" : "rate");
  const [form, fields] = useForm({
    lastResult: actionData,
    ...formCheck(calibrationSchema),
    defaultValue: record
      ? {
          kind: record.kind,
          equipmentId: String(record.equipmentId),
          performedOn: record.performedOn,
          dueOn: record.dueOn,
          notes: record.notes ?? undefined,
          meterId: record.meterId ? String(record.meterId) : undefined,
          // Conform types this field as text because the schema preprocesses it; the rows are read back by name.
          readings: (record.readings ?? []).map((r) => ({ setRpm: String(r.setRpm), measuredRpm: String(r.measuredRpm) })) as unknown as string,
          knownLengthMm: record.knownLengthM === null ? undefined : String(Number((record.knownLengthM * 1000).toPrecision(8))),
          knownLengthUncertaintyMm:
            record.knownLengthUncertaintyM === null ? undefined : String(Number((record.knownLengthUncertaintyM * 1000).toPrecision(8))),
          lengthPx: record.lengthPx === null ? undefined : String(record.lengthPx),
          lengthUncertaintyPx: record.lengthUncertaintyPx === null ? undefined : String(record.lengthUncertaintyPx),
          nominalFrameRateFps: record.nominalFrameRateFps === null ? undefined : String(record.nominalFrameRateFps),
          frameIntervals: record.frameIntervals === null ? undefined : String(record.frameIntervals),
          frameIntervalsUncertainty: record.frameIntervalsUncertainty === null ? undefined : String(record.frameIntervalsUncertainty),
          referenceElapsedS: record.referenceElapsedS === null ? undefined : String(record.referenceElapsedS),
          referenceElapsedUncertaintyS: record.referenceElapsedUncertaintyS === null ? undefined : String(record.referenceElapsedUncertaintyS),
        }
      : {
          kind: initialKind,
          equipmentId: presetItem && calibrationKindFor[initialKind] === presetItem.kind ? String(presetItem.id) : undefined,
          performedOn: loaderData.today,
          frameIntervalsUncertainty: "1",
          lengthUncertaintyPx: "1",
          nominalFrameRateFps: presetItem?.nominalFrameRateFps ? String(presetItem.nominalFrameRateFps) : undefined,
        },
  });
  const [kind, setKind] = useState<CalibrationKind>((fields.kind.initialValue as CalibrationKind | undefined) ?? initialKind);
  const candidates = items.filter((i) => i.kind === calibrationKindFor[kind]);
  const meters = items.filter((i) => i.kind === "rate_meter");
  const rows = (fields.readings.initialValue as Row[] | undefined) ?? [];
  const errs = form.allErrors;
  const text = (name: keyof typeof fields, label: string, extra: Record<string, unknown> = {}) => {
    const f = fields[name];
    return <TextField label={label} name={f.name} key={f.key} defaultValue={f.initialValue as string | undefined} error={f.errors} {...extra} />;
  };

  if (signed && record) {
    return (
      <div>
        <PageHeader title={`Calibration #${record.id}`} />
        <Notice kind="error" title="Signed off: this record cannot change">
          A signed record is kept exactly as it was signed. Record a new calibration to supersede it.
        </Notice>
        <div className="mt-4 flex gap-3">
          <ButtonLink to={`/calibrations/new?equipmentId=${record.equipmentId}&kind=${record.kind}`} tone="primary">
            Record a new calibration
          </ButtonLink>
          <ButtonLink to={`/calibrations/${record.id}`}>Back to the record</ButtonLink>
        </div>
      </div>
    );
  }

  return (
    <div>
      <PageHeader
        title={record ? `Edit calibration #${record.id}` : "Record a calibration"}
        subtitle="A lab manager signs the record off; after that it never changes."
      />
      <Card>
        <Form method="post" className="grid gap-5 md:grid-cols-2" {...getFormProps(form)}>
          <FormProblem errors={form.errors} className="md:col-span-2" />
          <SelectField
            label="Kind"
            name={fields.kind.name}
            defaultValue={kind}
            error={fields.kind.errors}
            disabled={Boolean(record)}
            onChange={(e) => setKind(e.target.value as CalibrationKind)}
            choices={choicesOf(calibrationKinds, calibrationKindLabels)}
          />
          {record ? <input type="hidden" name={fields.kind.name} value={record.kind} /> : null}
          <SelectField
            label={kind === "rate" ? "Table" : "Camera"}
            name={fields.equipmentId.name}
            key={`${fields.equipmentId.key}-${kind}`}
            defaultValue={fields.equipmentId.initialValue as string | undefined}
            error={fields.equipmentId.errors}
            disabled={Boolean(record)}
            blank="Choose…"
            choices={choicesByName(candidates)}
          />
          {record ? <input type="hidden" name={fields.equipmentId.name} value={record.equipmentId} /> : null}
          {text("performedOn", "Calibration date", { type: "date", max: loaderData.today })}
          {text("dueOn", "Due date", {
            type: "date",
            hint: `Leave empty for the lab's interval: ${loaderData.intervals[kind]} days after the calibration date.`,
          })}

          {kind === "rate" ? (
            <>
              <div className="md:col-span-2">
                <SelectField
                  label="Rate meter used"
                  name={fields.meterId.name}
                  key={fields.meterId.key}
                  defaultValue={fields.meterId.initialValue as string | undefined}
                  error={fields.meterId.errors}
                  blank="Choose…"
                  choices={choicesByName(meters)}
                />
              </div>
              <fieldset className="md:col-span-2" aria-describedby={fields.readings.errors ? "readings-error" : undefined}>
                <legend className="font-bold">Readings</legend>
                <p className="mb-2 text-sm text-muted">
                  At {MIN_RATE_READINGS} or more set rates across the range you use; leave spare rows empty. Tankside fits measured = a·set + b and checks every
                  reading against the table's tolerance.
                </p>
                {fields.readings.errors ? (
                  <p id="readings-error" className="mb-2 text-sm font-bold text-disagrees-ink" role="alert">
                    {fields.readings.errors[0]}
                  </p>
                ) : null}
                <table className="text-left">
                  <thead>
                    <tr>
                      <th className="pr-3">#</th>
                      <th className="pr-3">Set rate (rpm)</th>
                      <th>Measured rate (rpm)</th>
                    </tr>
                  </thead>
                  <tbody>
                    {Array.from({ length: ROWS }, (_, i) => {
                      // Each bad reading is outlined on its own, and the row says what is wrong with each.
                      const setError = errs[`readings[${i}].setRpm`]?.[0];
                      const measuredError = errs[`readings[${i}].measuredRpm`]?.[0];
                      const rowErrors = [setError ? `Set rate: ${setError}` : null, measuredError ? `Measured rate: ${measuredError}` : null].filter(Boolean);
                      const errorId = rowErrors.length ? `reading-${i}-error` : undefined;
                      return (
                        <tr key={i} className="align-top">
                          <td className="py-1 pr-3">{i + 1}</td>
                          <td className="py-1 pr-3">
                            <input
                              aria-label={`Set rate ${i + 1}`}
                              name={`readings[${i}].setRpm`}
                              defaultValue={rows[i]?.setRpm ?? ""}
                              inputMode="decimal"
                              aria-invalid={setError ? true : undefined}
                              aria-describedby={setError ? errorId : undefined}
                              className={cell}
                            />
                          </td>
                          <td className="py-1">
                            <input
                              aria-label={`Measured rate ${i + 1}`}
                              name={`readings[${i}].measuredRpm`}
                              defaultValue={rows[i]?.measuredRpm ?? ""}
                              inputMode="decimal"
                              aria-invalid={measuredError ? true : undefined}
                              aria-describedby={measuredError ? errorId : undefined}
                              className={cell}
                            />
                            {rowErrors.length ? (
                              <p id={errorId} className="max-w-64 text-sm font-bold text-disagrees-ink" role="alert">
                                {rowErrors.join(" ")}
                              </p>
                            ) : null}
                          </td>
                        </tr>
                      );
                    })}
                  </tbody>
                </table>
              </fieldset>
            </>
          ) : null}

          {kind === "scale" ? (
            <>
              {text("knownLengthMm", "Known length", {
                unit: "mm",
                inputMode: "decimal",
                hint: "A ruler or target lying on the tank floor or the water surface you film.",
              })}
              {text("knownLengthUncertaintyMm", "Its uncertainty", { unit: "mm", inputMode: "decimal" })}
              {text("lengthPx", "Its length in the image", { unit: "px", inputMode: "decimal" })}
              {text("lengthUncertaintyPx", "Uncertainty in the image", { unit: "px", inputMode: "decimal" })}
            </>
          ) : null}

          {kind === "timing" ? (
            <>
              {text("nominalFrameRateFps", "Nominal frame rate", { unit: "frames/s", inputMode: "decimal" })}
              {text("frameIntervals", "Frame intervals counted", {
                unit: "intervals",
                inputMode: "numeric",
                hint: "Between two readings of a clock or rate meter filmed in view.",
              })}
              {text("frameIntervalsUncertainty", "Uncertainty of the count", { unit: "intervals", inputMode: "decimal" })}
              {text("referenceElapsedS", "Elapsed time by the reference", { unit: "s", inputMode: "decimal" })}
              {text("referenceElapsedUncertaintyS", "Uncertainty of the elapsed time", { unit: "s", inputMode: "decimal" })}
            </>
          ) : null}

          <div className="md:col-span-2">
            <TextAreaField
              label="Notes"
              name={fields.notes.name}
              defaultValue={fields.notes.initialValue as string | undefined}
              error={fields.notes.errors}
              hint="Conditions, method, anything the next person should know."
            />
          </div>
          <div className="md:col-span-2 flex gap-3">
            <Button type="submit">{record ? "Save changes" : "Save the record"}</Button>
            <p className="self-center text-sm text-muted">Photos and certificates are added on the record's page after saving.</p>
          </div>
        </Form>
      </Card>
    </div>
  );
}
