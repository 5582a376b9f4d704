import { Form, data } from "react-router";
import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import type { Route } from "./+types/settings";
import { readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { getLabSettings, setLabSetting } from "~/.server/settings";
import { refitUnsignedRuns } from "~/.server/runs/rechecks";
import { labSettingsSchema } from "~/lib/validation/settings";
import { settingDefaults, settingLimits, type SettingKey } from "~/lib/settings";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";

export const meta: Route.MetaFunction = () => [{ title: "Settings · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  return { settings: await getLabSettings() };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "lab_manager");
  const submission = parseWithZod(await readForm(request), { schema: labSettingsSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), saved: false }, { status: 400 });
  const before = await getLabSettings();
  // Every value is checked before any is written, so a bad entry changes nothing.
  for (const [key, value] of Object.entries(submission.value) as [SettingKey, number][]) await setLabSetting(key, value);
  // The tolerance decides verdicts: every unsigned run with a check is fitted again under the new one.
  if ((await getLabSettings()).checkTolerancePct !== before.checkTolerancePct) await refitUnsignedRuns(user.id);
  return { result: submission.reply(), saved: true };
}

const groups: { title: string; hint: string; keys: SettingKey[] }[] = [
  {
    title: "Calibrations",
    hint: "How long each kind of calibration stays in force, and how early the lab managers are reminded by e-mail.",
    keys: ["rateCalibrationIntervalDays", "scaleCalibrationIntervalDays", "timingCheckIntervalDays", "calibrationReminderDays"],
  },
  {
    title: "Runs and bookings",
    hint: "The spin-up wait sets the lead time Tankside proposes before a booked run; a theory check agrees only when the whole 95 % interval of (f measured − f predicted)/f predicted lies within ± the tolerance, disagrees only when it lies wholly outside, and is inconclusive otherwise.",
    keys: ["spinUpTimesToWait", "checkTolerancePct"],
  },
  {
    title: "Sign-in",
    hint: "A browser left signed in but unused is signed out after this many hours; it is signed out 12 hours after sign-in in any case.",
    keys: ["sessionIdleHours"],
  },
];

export default function Settings({ loaderData, actionData }: Route.ComponentProps) {
  const outcome = actionData as { result?: SubmissionResult<string[]>; saved?: boolean } | undefined;
  const [form, fields] = useForm({
    lastResult: outcome?.result,
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: labSettingsSchema }),
    defaultValue: Object.fromEntries(Object.entries(loaderData.settings).map(([k, v]) => [k, String(v)])),
  });
  return (
    <div>
      <PageHeader title="Settings" subtitle="The lab's own rules. Changes apply from the next record, booking or check." />
      <div className="mb-4">
        {outcome?.saved ? <Notice kind="success">Settings saved.</Notice> : null}
        {outcome && !outcome.saved ? <Notice kind="error">Nothing was saved: correct the fields marked below.</Notice> : null}
      </div>
      <Form method="post" className="grid gap-6 lg:grid-cols-2" {...getFormProps(form)}>
        {groups.map((g) => (
          <Card key={g.title} title={g.title}>
            <p className="mb-4 text-muted">{g.hint}</p>
            <div className="flex flex-col gap-4">
              {g.keys.map((key) => {
                const f = fields[key]!;
                const lim = settingLimits[key];
                return (
                  <TextField
                    key={f.key}
                    label={lim.label}
                    name={f.name}
                    defaultValue={f.initialValue}
                    error={f.errors}
                    unit={lim.unit}
                    inputMode="decimal"
                    hint={`From ${lim.min} to ${lim.max}; Tankside's default is ${settingDefaults[key]}.`}
                  />
                );
              })}
            </div>
          </Card>
        ))}
        <div className="lg:col-span-2">
          <Button type="submit">Save settings</Button>
        </div>
      </Form>
    </div>
  );
}
