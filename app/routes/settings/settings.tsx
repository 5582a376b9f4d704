import { Form, data } from "react-router";
import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import type { Route } from "./+types/settings";
import { readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { getLabSettings, setLabRateSource, setLabSetting, setLabTimeZone, setSignOffRule } from "~/.server/settings";
import { refitUnsignedRuns } from "~/.server/runs/rechecks";
import { labSettingsSchema } from "~/lib/validation/settings";
import { RATE_SOURCES, rateSourceLabels, settingDefaults, settingLimits, SIGN_OFF_RULES, signOffRuleLabels, type SettingKey } from "~/lib/settings";
import { systemTimeZone, timeFormat, timeZoneNames } from "~/lib/time-format";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";

export const meta: Route.MetaFunction = () => [{ title: "Settings · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  // The server's zone is what Tankside uses until the lab manager names one.
  return { settings: await getLabSettings(), serverTimeZone: systemTimeZone(), timeZones: timeZoneNames(), now: new Date().toISOString() };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "lab_manager");
  const submission = parseWithZod(await readForm(request), { schema: labSettingsSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), saved: false }, { status: 400 });
  const before = await getLabSettings();
  // Every value is checked before any is written, so a bad entry changes nothing.
  const { timeZone, rateSource, signOffRule, ...numbers } = submission.value;
  for (const [key, value] of Object.entries(numbers) as [SettingKey, number][]) await setLabSetting(key, value);
  await setLabTimeZone(timeZone);
  if (rateSource) await setLabRateSource(rateSource);
  if (signOffRule) await setSignOffRule(signOffRule);
  // The tolerance and the rate used decide verdicts: every unsigned run with a check is fitted again under the new ones.
  const after = await getLabSettings();
  if (after.checkTolerancePct !== before.checkTolerancePct || after.rateSource !== before.rateSource) await refitUnsignedRuns(user.id);
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
    ...formCheck(labSettingsSchema),
    defaultValue: {
      ...Object.fromEntries(Object.keys(settingDefaults).map((k) => [k, String(loaderData.settings[k as SettingKey])])),
      timeZone: loaderData.settings.timeZoneIsServerDefault ? "" : loaderData.settings.timeZone,
      rateSource: loaderData.settings.rateSource,
      signOffRule: loaderData.settings.signOffBySecondPerson ? "second_person" : "anyone",
    },
  });
  const zone = fields.timeZone;
  const example = timeFormat(loaderData.settings.timeZone).dateTime(loaderData.now);
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
                const f = fields[key];
                const lim = settingLimits[key];
                return (
                  <TextField
                    key={f.key}
                    label={lim.label}
                    name={f.name}
                    defaultValue={f.initialValue as string | undefined}
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
        <Card title="The table's rate">
          <fieldset>
            <legend className="mb-4 text-muted">
              The theory check predicts f from the table&apos;s rate. When the frames also give the rate (a mark on the table, or the room turning past a
              co-rotating camera), which one does the verdict use? Both are shown on every run either way, and a disagreement is flagged.
            </legend>
            <div className="flex flex-col gap-2">
              {RATE_SOURCES.map((source) => (
                <label key={source} className="flex items-center gap-2">
                  <input type="radio" name={fields.rateSource.name} value={source} defaultChecked={fields.rateSource.initialValue === source} />
                  {rateSourceLabels[source]}
                </label>
              ))}
            </div>
            {fields.rateSource.errors ? (
              <p className="mt-2 text-sm font-bold text-disagrees-ink" role="alert">
                {fields.rateSource.errors.join(" ")}
              </p>
            ) : null}
          </fieldset>
        </Card>
        <Card title="Calibration sign-off">
          <fieldset>
            <legend className="mb-4 text-muted">
              A signed calibration is in force and never changes. Who may sign one off? With a second person, the lab manager who performed a calibration asks
              another to check and sign it.
            </legend>
            <div className="flex flex-col gap-2">
              {SIGN_OFF_RULES.map((rule) => (
                <label key={rule} className="flex items-center gap-2">
                  <input type="radio" name={fields.signOffRule.name} value={rule} defaultChecked={fields.signOffRule.initialValue === rule} />
                  {signOffRuleLabels[rule]}
                </label>
              ))}
            </div>
            {fields.signOffRule.errors ? (
              <p className="mt-2 text-sm font-bold text-disagrees-ink" role="alert">
                {fields.signOffRule.errors.join(" ")}
              </p>
            ) : null}
          </fieldset>
        </Card>
        <Card title="Time zone">
          <p className="mb-4 text-muted">
            Pages, e-mails and printouts show times on the lab&apos;s clock, with the zone named. Calendar files and the API keep UTC.
          </p>
          <TextField
            key={zone.key}
            label="Lab time zone"
            name={zone.name}
            defaultValue={zone.initialValue}
            error={zone.errors}
            list="time-zone-names"
            autoComplete="off"
            spellCheck={false}
            placeholder={loaderData.serverTimeZone}
            hint={`An IANA name such as Europe/Berlin, or UTC. Empty: the server's zone, ${loaderData.serverTimeZone}. Now it reads ${example}.`}
          />
          <datalist id="time-zone-names">
            {loaderData.timeZones.map((z) => (
              <option key={z} value={z} />
            ))}
          </datalist>
        </Card>
        <div className="lg:col-span-2">
          <Button type="submit">Save settings</Button>
        </div>
      </Form>
    </div>
  );
}
