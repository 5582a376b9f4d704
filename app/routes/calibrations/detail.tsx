import { Form, data } from "react-router";
import { useRef, useState } from "react";
import type { Route } from "./+types/detail";
import uppyCore from "@uppy/core/css/style.min.css?url";
import uppyDashboard from "@uppy/dashboard/css/style.min.css?url";
import { can, requireCapability } from "~/.server/auth/permissions";
import { notFound, parseId, readForm } from "~/.server/http";
import { CalibrationError, getCalibration, secondPersonRefusal, signOffCalibration } from "~/.server/calibrations";
import { serializeCalibrations } from "~/.server/calibration-views";
import { removeCalibrationAttachment } from "~/.server/uploads/calibration-attachments";
import { getLabSettings } from "~/.server/settings";
import { getCalibrationHistory } from "~/.server/calibration-history";
import { RunHistoryList } from "~/components/run-record/run-history-list";
import { calibrationKindLabels, trueRateFromCalibration } from "~/lib/calibrations";
import { formatNumber } from "~/lib/number-format";
import { useLabTime } from "~/components/lab-time";
import type { TimeFormat } from "~/lib/time-format";
import { Button, ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { StandingTag, calibrationResult } from "~/components/calibration-facts";
import { CalibrationUploader } from "~/components/calibration-uploader";
import { formText } from "~/lib/form-text";
import { TableHead } from "~/components/ui/table-head";
import { FactRows } from "~/components/ui/facts";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: `${data ? `${calibrationKindLabels[data.record.kind]} #${data.record.id}` : "Calibration"} · Tankside` },
];
export const links: Route.LinksFunction = () => [
  { rel: "stylesheet", href: uppyCore },
  { rel: "stylesheet", href: uppyDashboard },
];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCapability(request, "read_calibrations");
  const cal = await getCalibration(parseId(request, params.id, "That calibration record"));
  if (!cal) throw notFound(request, "That calibration record");
  const [[record], history, settings] = await Promise.all([serializeCalibrations([cal]), getCalibrationHistory(cal.id), getLabSettings()]);
  const canSign = can(user, "sign_off_calibration");
  return {
    record: record!,
    history,
    canRecord: can(user, "record_calibration"),
    canSign,
    // Said before the button is pressed: under the lab's rule, the person who performed it does not sign it.
    signBlocked: canSign ? secondPersonRefusal(cal, user, settings.signOffBySecondPerson) : null,
  };
}

type Outcome = { notice?: string; problem?: string; about: "sign-off" | "attachments" };

export async function action({ request, params }: Route.ActionArgs) {
  // Technicians post here to remove a file from their record; signing off is checked for lab managers below.
  const user = await requireCapability(request, "record_calibration");
  const id = parseId(request, params.id, "That calibration record");
  const form = await readForm(request);
  const intent = formText(form, "intent");
  try {
    if (intent === "sign-off") {
      const manager = await requireCapability(request, "sign_off_calibration");
      if (formText(form, "confirm") !== "yes") {
        return data<Outcome>({ problem: "Confirm the sign-off: it cannot be undone.", about: "sign-off" }, { status: 400 });
      }
      await signOffCalibration(id, manager);
      return { notice: "Signed off. From now on this record is kept exactly as it is.", about: "sign-off" } satisfies Outcome;
    }
    if (intent === "remove-attachment") {
      const attachmentId = parseId(request, formText(form, "attachmentId"), "That attachment");
      const removed = await removeCalibrationAttachment(id, attachmentId, user);
      return { notice: `"${removed.name}" removed from this record.`, about: "attachments" } satisfies Outcome;
    }
    return data<Outcome>({ problem: "Unknown action.", about: "sign-off" }, { status: 400 });
  } catch (err) {
    if (err instanceof CalibrationError) {
      return data<Outcome>({ problem: err.message, about: intent === "remove-attachment" ? "attachments" : "sign-off" }, { status: err.status });
    }
    throw err;
  }
}

/** Sign-off in two steps: it cannot be undone, so the button asks first and says what it means. */
function SignOffButton({ id }: { id: number }) {
  const [asking, setAsking] = useState(false);
  const question = useRef<HTMLParagraphElement>(null);
  if (!asking) {
    return (
      <Button
        type="button"
        onClick={() => {
          setAsking(true);
          requestAnimationFrame(() => question.current?.focus());
        }}
      >
        Sign off
      </Button>
    );
  }
  return (
    <Form
      method="post"
      className="flex max-w-xl flex-col gap-3 rounded-card border-2 border-caution-line bg-caution-bg p-4 text-caution-ink"
      data-testid="sign-off-confirmation"
    >
      <p ref={question} tabIndex={-1} className="font-bold">
        Sign off calibration #{id}?
      </p>
      <p>Once signed it is in force and can never be changed or have files added or removed; a mistake needs a new record.</p>
      <input type="hidden" name="confirm" value="yes" />
      <div className="flex flex-wrap gap-2">
        <Button type="submit" name="intent" value="sign-off">
          Yes, sign it off
        </Button>
        <Button type="button" tone="plain" onClick={() => setAsking(false)}>
          Not yet
        </Button>
      </div>
    </Form>
  );
}

function reminderText(m: { state: string; sentAt: string | null; lastError: string | null; attempts: number }, time: TimeFormat) {
  if (m.state === "sent") return `Sent ${time.dateTime(m.sentAt)}`;
  if (m.state === "failed") return `Not sent: gave up after ${m.attempts} attempts (${m.lastError})`;
  return m.lastError ? `Queued; attempt ${m.attempts} failed (${m.lastError}), tried again automatically` : "Queued";
}

export default function CalibrationDetail({ loaderData, actionData }: Route.ComponentProps) {
  const time = useLabTime();
  const r = loaderData.record;
  const outcome: Partial<Outcome> = actionData ?? {};
  const signOffOutcome = outcome.about === "sign-off" ? outcome : {};
  const fileOutcome = outcome.about === "attachments" ? outcome : {};
  const signed = Boolean(r.signedOffAt);
  const line =
    r.kind === "rate" && r.slope !== null
      ? {
          slope: r.slope,
          intercept: r.interceptRpm!,
          slopeStdError: r.slopeStdError!,
          interceptStdError: r.interceptStdErrorRpm!,
          slopeInterceptCovariance: r.slopeInterceptCovarianceRpm!,
        }
      : null;
  const rows: [string, string | null][] = [
    ["Item", r.equipmentName],
    ["Rate meter", r.meterName],
    ["Performed", `${time.date(r.performedAt)} by ${r.performedByName}`],
    ["Due", time.date(r.dueAt)],
    ["Signed off", r.signedOffAt ? `${time.dateTime(r.signedOffAt)} by ${r.signedOffByName}` : "Not yet"],
    ["Result", calibrationResult(r)],
    ["Reminder", r.reminder ? reminderText(r.reminder, time) : null],
  ];
  return (
    <div>
      <PageHeader
        title={`${calibrationKindLabels[r.kind]} #${r.id}`}
        subtitle={<StandingTag standing={r.standing} />}
        actions={
          <>
            {!signed && loaderData.canRecord ? <ButtonLink to={`/calibrations/${r.id}/edit`}>Edit</ButtonLink> : null}
            {signed && loaderData.canRecord ? (
              <ButtonLink to={`/calibrations/new?equipmentId=${r.equipmentId}&kind=${r.kind}`}>Record a new one</ButtonLink>
            ) : null}
            {!signed && loaderData.canSign && !loaderData.signBlocked ? <SignOffButton id={r.id} /> : null}
          </>
        }
      />
      <div className="mb-4 flex flex-col gap-3">
        {signOffOutcome.notice ? <Notice kind="success">{signOffOutcome.notice}</Notice> : null}
        {signOffOutcome.problem ? <Notice kind="error">{signOffOutcome.problem}</Notice> : null}
        {r.standing === "past_due" ? (
          <Notice kind="error" title="Past due">
            This record is no longer in force. Runs made with {r.equipmentName} are flagged until a new record is signed off.
          </Notice>
        ) : null}
        {r.standing === "superseded" ? (
          <Notice kind="info" title="Superseded">
            A later signed record of this kind for {r.equipmentName} is the one that counts.
          </Notice>
        ) : null}
        {!signed ? (
          <Notice kind="caution" title="Awaiting sign-off">
            Not in force until a lab manager signs it off.
            {loaderData.signBlocked ? <span data-testid="sign-off-blocked"> {loaderData.signBlocked}</span> : null}
          </Notice>
        ) : null}
        {r.kind === "rate" && r.passed === false ? (
          <Notice kind="error" title="Fails the tolerance">
            At least one reading is more than {formatNumber(r.tolerancePct, 6)} % off its set rate. Check the drive before relying on the rate.
          </Notice>
        ) : null}
      </div>
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-2">
        <Card title="The record">
          <FactRows rows={rows} />
          {r.notes ? <p className="mt-4 whitespace-pre-wrap">{r.notes}</p> : null}
        </Card>
        {r.kind === "rate" && r.readings && line ? (
          <Card title="Readings and fit">
            <table className="w-full text-left">
              <TableHead columns={["Set (rpm)", "Measured (rpm)", "Off set rate", "Residual (rpm)"]} compact />
              <tbody>
                {r.readings.map((x, i) => {
                  const pct = (100 * (x.measuredRpm - x.setRpm)) / x.setRpm;
                  return (
                    <tr key={i} className="border-b border-line">
                      <td className="py-1 pr-3 font-mono">{formatNumber(x.setRpm, 6)}</td>
                      <td className="py-1 pr-3 font-mono">{formatNumber(x.measuredRpm, 6)}</td>
                      <td className={`py-1 pr-3 font-mono ${Math.abs(pct) > (r.tolerancePct ?? 1) ? "font-bold text-disagrees-ink" : ""}`}>
                        {pct >= 0 ? "+" : ""}
                        {formatNumber(pct, 3)} %
                      </td>
                      <td className="py-1 font-mono">{formatNumber(x.measuredRpm - (line.slope * x.setRpm + line.intercept), 3)}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
            <dl className="mt-4 grid grid-cols-[auto_1fr] gap-x-6 gap-y-1 text-sm">
              <dt className="font-bold">Slope a</dt>
              <dd className="font-mono">
                {formatNumber(line.slope, 6)} ± {formatNumber(line.slopeStdError, 2)}
              </dd>
              <dt className="font-bold">Intercept b</dt>
              <dd className="font-mono">
                {formatNumber(line.intercept, 4)} ± {formatNumber(line.interceptStdError, 2)} rpm
              </dd>
              <dt className="font-bold">Residual SD</dt>
              <dd className="font-mono">{formatNumber(r.residualSdRpm, 3)} rpm</dd>
              <dt className="font-bold">Largest residual</dt>
              <dd className="font-mono">{formatNumber(r.maxResidualRpm, 3)} rpm</dd>
              <dt className="font-bold">Largest deviation</dt>
              <dd className="font-mono">
                {formatNumber(r.maxDeviationRpm, 3)} rpm ({formatNumber(r.maxDeviationPct, 3)} %)
              </dd>
              <dt className="font-bold">True rate at 10 rpm set</dt>
              <dd className="font-mono">
                {(() => {
                  const t = trueRateFromCalibration(line, 10);
                  return `${formatNumber(t.rpm, 6)} ± ${formatNumber(t.stdErrorRpm, 2)} rpm`;
                })()}
              </dd>
            </dl>
          </Card>
        ) : null}
        <Card title="Photos and certificates">
          <div className="mb-3 flex flex-col gap-2" aria-live="polite">
            {fileOutcome.notice ? <Notice kind="success">{fileOutcome.notice}</Notice> : null}
            {fileOutcome.problem ? <Notice kind="error">{fileOutcome.problem}</Notice> : null}
          </div>
          {r.attachments.length ? (
            <ul className="mb-4 flex flex-col gap-2">
              {r.attachments.map((a) => (
                <li key={a.id} className="flex flex-wrap items-center gap-x-3 gap-y-1">
                  <span>
                    <a href={a.url} target="_blank" rel="noreferrer">
                      {a.originalName}
                    </a>{" "}
                    <span className="text-sm text-muted">
                      ({a.contentType}, {Math.ceil(a.sizeBytes / 1024)} kB)
                    </span>
                  </span>
                  {!signed && loaderData.canRecord ? (
                    <Form method="post" preventScrollReset>
                      <input type="hidden" name="attachmentId" value={a.id} />
                      <Button tone="quiet" type="submit" name="intent" value="remove-attachment" aria-label={`Remove ${a.originalName}`}>
                        Remove
                      </Button>
                    </Form>
                  ) : null}
                </li>
              ))}
            </ul>
          ) : (
            <p className="mb-4 text-muted">None attached.</p>
          )}
          {!signed && loaderData.canRecord ? (
            <CalibrationUploader calibrationId={r.id} />
          ) : signed ? (
            <p className="text-sm text-muted">Signed records take no new attachments.</p>
          ) : null}
        </Card>
        <Card title="History">
          <RunHistoryList entries={loaderData.history} events={["created", "attachment", "attachmentRemoved", "signedOff"]} testId="calibration-history" />
        </Card>
      </div>
    </div>
  );
}
