import { Form, data, redirect } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import { useState } from "react";
import type { Route } from "./+types/edit";
import { requireRole } from "~/.server/auth/permissions";
import { createEquipment, getEquipment, serializeEquipment, updateEquipment } from "~/.server/equipment";
import { notFound, parseId, readForm } from "~/.server/http";
import { equipmentSchema } from "~/lib/validation/equipment";
import { equipmentKinds, equipmentStatuses, kindLabels, meterTypes, statusLabels, type EquipmentKind } from "~/lib/equipment";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { choicesOf, SelectField, TextAreaField, TextField } from "~/components/ui/field";
import { FormProblem } from "~/components/ui/notice";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.item ? `Edit ${data.item.name}` : "Add equipment"} · Tankside` }];

/** One module for /equipment/new and /equipment/:id/edit. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  if (!params.id) return { item: null };
  const item = await getEquipment(parseId(request, params.id, "That piece of equipment"));
  if (!item) throw notFound(request, "That piece of equipment");
  return { item: serializeEquipment(item) };
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireRole(request, "lab_manager");
  const id = params.id === undefined ? undefined : parseId(request, params.id, "That piece of equipment");
  const submission = parseWithZod(await readForm(request), { schema: equipmentSchema });
  if (submission.status !== "success") return data(submission.reply(), { status: 400 });
  if (!id) {
    const item = await createEquipment(submission.value);
    return redirect(`/equipment/${item.id}`);
  }
  try {
    const item = await updateEquipment(id, submission.value);
    if (!item) throw notFound(request, "That piece of equipment");
    return redirect(`/equipment/${item.id}`);
  } catch (err) {
    if (err instanceof RangeError) return data(submission.reply({ formErrors: [err.message] }), { status: 400 });
    throw err;
  }
}

const str = (v: number | null) => (v === null ? undefined : String(v));
const cmOf = (m: number | null | undefined) => (m === null || m === undefined ? undefined : String(Number((m * 100).toPrecision(6))));

export default function EditEquipment({ loaderData, actionData }: Route.ComponentProps) {
  const item = loaderData.item;
  const [form, fields] = useForm({
    lastResult: actionData,
    ...formCheck(equipmentSchema),
    defaultValue: item
      ? {
          kind: item.kind,
          name: item.name,
          status: item.status,
          maker: item.maker,
          model: item.model,
          serialNumber: item.serialNumber,
          location: item.location,
          notes: item.notes,
          meterType: item.meterType,
          diameterCm: cmOf(item.diameterM),
          depthCm: cmOf(item.depthM),
          maxRateRpm: str(item.maxRateRpm),
          rateTolerancePct: str(item.rateTolerancePct),
          resolutionWidthPx: str(item.resolutionWidthPx),
          resolutionHeightPx: str(item.resolutionHeightPx),
          nominalFrameRateFps: str(item.nominalFrameRateFps),
          scaleTolerancePct: str(item.scaleTolerancePct),
          flatTable: item.flatTable ? "on" : undefined,
        }
      : { kind: "table", status: "in_service" },
  });
  const [kind, setKind] = useState<EquipmentKind>(item?.kind ?? "table");
  const text = (name: keyof typeof fields, label: string, extra: Record<string, unknown> = {}) => {
    const f = fields[name];
    return <TextField label={label} name={f.name} key={f.key} defaultValue={f.initialValue as string | undefined} error={f.errors} {...extra} />;
  };
  return (
    <div>
      <PageHeader title={item ? `Edit ${item.name}` : "Add equipment"} />
      <Card>
        <Form method="post" className="grid gap-5 md:grid-cols-2" {...getFormProps(form)}>
          <FormProblem errors={form.errors} className="md:col-span-2" />
          <SelectField
            label="Kind"
            name={fields.kind.name}
            defaultValue={kind}
            error={fields.kind.errors}
            disabled={Boolean(item)}
            onChange={(e) => setKind(e.target.value as EquipmentKind)}
            choices={choicesOf(equipmentKinds, kindLabels)}
          />
          {item ? <input type="hidden" name={fields.kind.name} value={item.kind} /> : null}
          {text("name", "Name", { maxLength: 120, placeholder: "e.g. Table B (west bench)" })}
          <SelectField
            label="Status"
            name={fields.status.name}
            defaultValue={fields.status.initialValue}
            error={fields.status.errors}
            choices={choicesOf(equipmentStatuses, statusLabels)}
          />
          {text("location", "Location")}
          {text("maker", "Maker")}
          {text("model", "Model")}
          {text("serialNumber", "Serial number")}
          {kind === "table" || kind === "tank"
            ? text("diameterCm", kind === "tank" ? "Inner diameter" : "Diameter", { unit: "cm", inputMode: "decimal" })
            : null}
          {kind === "table"
            ? text("maxRateRpm", "Maximum rate", { unit: "rpm", inputMode: "decimal", hint: "From the maker's documentation; runs above it are refused." })
            : null}
          {kind === "table"
            ? text("rateTolerancePct", "Rate calibration tolerance", {
                unit: "%",
                inputMode: "decimal",
                hint: "A rate calibration passes when every reading is within this share of the set rate (default 1 %).",
              })
            : null}
          {kind === "table" ? (
            <label className="flex min-h-12 items-center gap-3 font-bold">
              <input type="checkbox" name={fields.flatTable.name} defaultChecked={fields.flatTable.initialValue === "on"} className="h-6 w-6" />
              Flat top (adds the centrifugal term to the theory check)
            </label>
          ) : null}
          {kind === "tank" ? text("depthCm", "Inner depth", { unit: "cm", inputMode: "decimal" }) : null}
          {kind === "camera" ? text("resolutionWidthPx", "Image width", { unit: "px", inputMode: "numeric" }) : null}
          {kind === "camera" ? text("resolutionHeightPx", "Image height", { unit: "px", inputMode: "numeric" }) : null}
          {kind === "camera" ? text("nominalFrameRateFps", "Nominal frame rate", { unit: "frames/s", inputMode: "decimal" }) : null}
          {kind === "camera"
            ? text("scaleTolerancePct", "Scale tolerance", {
                unit: "%",
                inputMode: "decimal",
                hint: "A run whose view setup scale differs from the scale calibration in force by more than this share is flagged (default 1 %).",
              })
            : null}
          {kind === "rate_meter" ? (
            <SelectField
              label="Type"
              name={fields.meterType.name}
              defaultValue={typeof fields.meterType.initialValue === "string" ? fields.meterType.initialValue : "tachometer"}
              choices={meterTypes.map((m) => ({ value: m, label: m }))}
            />
          ) : null}
          <div className="md:col-span-2">
            <TextAreaField label="Notes" name={fields.notes.name} defaultValue={fields.notes.initialValue as string | undefined} error={fields.notes.errors} />
          </div>
          <div className="md:col-span-2">
            <Button type="submit">{item ? "Save changes" : "Add to the register"}</Button>
          </div>
        </Form>
      </Card>
    </div>
  );
}
