import { Form, useNavigation } from "react-router";
import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { useState } from "react";
import { formCheck } from "~/lib/form-check";
import { bookingRequestSchema } from "~/lib/validation/bookings";
import { spinUpLeadS, tableBookingCaution } from "~/lib/bookings";
import { kindLabels } from "~/lib/equipment";
import { formatDuration, fromZonedInput } from "~/lib/time-format";
import { numberOrNull } from "~/lib/number-input";
import { useLabTime } from "~/components/lab-time";
import { Button } from "~/components/ui/button";
import { Card } from "~/components/ui/card";
import { SelectField, TextAreaField, TextField } from "~/components/ui/field";
import { Notice, FormProblem } from "~/components/ui/notice";
import type { BookingsPage } from "~/.server/bookings-page";

/** The request form's state (conform), held by the page, which also reads whether it shows errors. */
export function useBookingRequestForm(items: BookingsPage["items"], defaults: BookingsPage["defaults"], lastResult: SubmissionResult<string[]> | undefined) {
  const bookable = items.filter((i) => i.status === "in_service");
  return useForm({
    lastResult,
    ...formCheck(bookingRequestSchema),
    defaultValue: { equipmentId: String(bookable.find((i) => i.kind === "table")?.id ?? ""), start: defaults.start, end: defaults.end },
  });
}

type BookingRequestForm = ReturnType<typeof useBookingRequestForm>;

/**
 * The request for equipment time. For a table it asks the planned rate and depth and proposes
 * starting earlier by the water's spin-up time, τ = H/√(νΩ) times the lab's setting.
 */
export function BookingRequestCard({
  items,
  spinUpTimesToWait,
  form,
  fields,
}: {
  items: BookingsPage["items"];
  spinUpTimesToWait: number;
  form: BookingRequestForm[0];
  fields: BookingRequestForm[1];
}) {
  const time = useLabTime();
  const navigation = useNavigation();
  const bookable = items.filter((i) => i.status === "in_service");
  const [chosen, setChosen] = useState(typeof fields.equipmentId.initialValue === "string" ? fields.equipmentId.initialValue : "");
  const [rate, setRate] = useState("");
  const [depth, setDepth] = useState("");
  const [start, setStart] = useState(String(fields.start.initialValue ?? ""));
  const chosenItem = items.find((i) => String(i.id) === chosen);
  const rateRpm = numberOrNull(rate) ?? 0;
  const depthCm = numberOrNull(depth) ?? 0;
  const leadS = rateRpm > 0 && depthCm > 0 ? spinUpLeadS(depthCm / 100, rateRpm, spinUpTimesToWait) : null;
  const startAt = start ? fromZonedInput(start, time.zone) : null;
  const proposedStart = leadS !== null && startAt ? new Date(Math.floor((startAt.getTime() - leadS * 1000) / 60_000) * 60_000) : null;

  return (
    <Card title="Request equipment time">
      <Form method="post" action="/bookings" className="flex flex-col gap-4" {...getFormProps(form)}>
        <input type="hidden" name="intent" value="request" />
        <FormProblem errors={form.errors} />
        <SelectField
          label="Equipment"
          name={fields.equipmentId.name}
          key={fields.equipmentId.key}
          defaultValue={chosen}
          error={fields.equipmentId.errors}
          onChange={(e) => setChosen(e.target.value)}
          blank="Choose…"
          choices={bookable.map((i) => ({ value: i.id, label: `${i.name} (${kindLabels[i.kind].toLowerCase()})` }))}
        />
        <TextField
          label="Start"
          type="datetime-local"
          name={fields.start.name}
          key={fields.start.key}
          defaultValue={fields.start.initialValue}
          error={fields.start.errors}
          hint={`Lab time (${time.zone}).`}
          onChange={(e) => setStart(e.target.value)}
        />
        <TextField
          label="End"
          type="datetime-local"
          name={fields.end.name}
          key={fields.end.key}
          defaultValue={fields.end.initialValue}
          error={fields.end.errors}
        />
        <TextAreaField
          label="Purpose"
          name={fields.purpose.name}
          key={fields.purpose.key}
          defaultValue={fields.purpose.initialValue}
          error={fields.purpose.errors}
          maxLength={300}
          placeholder="e.g. Second-year lab, inertial circles"
        />
        {chosenItem?.kind === "table" ? (
          <>
            <p className="text-sm text-muted">For a run, give the planned rate and depth: Tankside works out how long the water needs to spin up.</p>
            <TextField
              label="Planned rate"
              name={fields.plannedRateRpm.name}
              key={fields.plannedRateRpm.key}
              defaultValue={fields.plannedRateRpm.initialValue as string | undefined}
              error={fields.plannedRateRpm.errors}
              unit="rpm"
              inputMode="decimal"
              onChange={(e) => setRate(e.target.value)}
            />
            <TextField
              label="Planned water depth"
              name={fields.plannedDepthCm.name}
              key={fields.plannedDepthCm.key}
              defaultValue={fields.plannedDepthCm.initialValue as string | undefined}
              error={fields.plannedDepthCm.errors}
              unit="cm"
              inputMode="decimal"
              onChange={(e) => setDepth(e.target.value)}
            />
            {leadS !== null ? (
              <div data-testid="spin-up-proposal">
                <Notice kind="info" title="Spin-up lead time">
                  {spinUpTimesToWait} × τ = {formatDuration(leadS)} (τ = H/√(νΩ), water at ν = 1.0 × 10⁻⁶ m²/s).
                  {proposedStart ? ` Tankside proposes starting at ${time.dateTime(proposedStart)}.` : null}
                </Notice>
              </div>
            ) : null}
            <label className="flex min-h-12 items-center gap-3 font-bold">
              <input type="checkbox" name={fields.addSpinUpLead.name} className="h-6 w-6" defaultChecked={fields.addSpinUpLead.initialValue === "on"} />
              Start earlier by the spin-up lead time
            </label>
            {fields.addSpinUpLead.errors ? (
              <p className="text-sm font-bold text-disagrees-ink" role="alert">
                {fields.addSpinUpLead.errors[0]}
              </p>
            ) : null}
            <Notice kind="caution">{tableBookingCaution}</Notice>
          </>
        ) : null}
        <Button type="submit" disabled={navigation.state === "submitting"}>
          Request booking
        </Button>
      </Form>
    </Card>
  );
}
