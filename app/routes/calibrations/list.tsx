import { Link } from "react-router";
import type { Route } from "./+types/list";
import { can, requireCapability } from "~/.server/auth/permissions";
import { listCalibrations, listCalibrationsDueOrExpired, serializeCalibrations } from "~/.server/calibrations";
import { getLabSettings } from "~/.server/settings";
import { calibrationKindLabels } from "~/lib/calibrations";
import { useLabTime } from "~/components/lab-time";
import { ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { StandingTag, calibrationResult } from "~/components/calibration-facts";

export const meta: Route.MetaFunction = () => [{ title: "Calibrations · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCapability(request, "read_calibrations");
  const settings = await getLabSettings();
  const [due, all] = await Promise.all([listCalibrationsDueOrExpired(settings.calibrationReminderDays), listCalibrations()]);
  const records = await serializeCalibrations(all);
  // Due and past-due first, then drafts awaiting sign-off, then the rest newest first.
  const rank = (id: number, standing: string) => (due.some((d) => d.id === id) ? 0 : standing === "draft" ? 1 : 2);
  records.sort((a, b) => rank(a.id, a.standing) - rank(b.id, b.standing) || b.performedOn.localeCompare(a.performedOn));
  return { due, records, reminderDays: settings.calibrationReminderDays, canRecord: can(user, "record_calibration") };
}

export default function Calibrations({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const { due, records } = loaderData;
  return (
    <div>
      <PageHeader
        title="Calibrations"
        subtitle="Every record, with what is due or past due first."
        actions={
          loaderData.canRecord ? (
            <ButtonLink to="/calibrations/new" tone="primary">
              Record a calibration
            </ButtonLink>
          ) : null
        }
      />
      {due.length ? (
        <div className="mb-6">
          <Notice kind={due.some((d) => d.pastDue) ? "error" : "caution"} title={`${due.length} due within ${loaderData.reminderDays} days or past due`}>
            <ul className="list-disc pl-5">
              {due.map((d) => (
                <li key={d.id}>
                  <Link to={`/calibrations/${d.id}`}>
                    {calibrationKindLabels[d.kind]} of {d.equipmentName}
                  </Link>
                  : {d.pastDue ? `past due since ${time.date(d.dueAt)}` : `due ${time.date(d.dueAt)}`}
                </li>
              ))}
            </ul>
          </Notice>
        </div>
      ) : null}
      <Card title={`${records.length} records`}>
        <div className="overflow-x-auto">
          <table className="w-full text-left">
            <thead>
              <tr className="border-b-2 border-line">
                <th className="py-2 pr-3">Record</th>
                <th className="py-2 pr-3">Item</th>
                <th className="py-2 pr-3">Done</th>
                <th className="py-2 pr-3">Due</th>
                <th className="py-2 pr-3">Result</th>
                <th className="py-2">Standing</th>
              </tr>
            </thead>
            <tbody>
              {records.map((r) => (
                <tr key={r.id} className="border-b border-line align-top" data-testid={`calibration-${r.id}`}>
                  <td className="py-3 pr-3">
                    <Link to={`/calibrations/${r.id}`} className="font-bold">
                      {calibrationKindLabels[r.kind]} #{r.id}
                    </Link>
                  </td>
                  <td className="py-3 pr-3">
                    <Link to={`/equipment/${r.equipmentId}`}>{r.equipmentName}</Link>
                  </td>
                  <td className="py-3 pr-3">
                    {time.date(r.performedAt)}
                    <p className="text-sm text-muted">{r.performedByName}</p>
                  </td>
                  <td className="py-3 pr-3">{time.date(r.dueAt)}</td>
                  <td className="py-3 pr-3 text-sm">{calibrationResult(r)}</td>
                  <td className="py-3">
                    <StandingTag standing={r.standing} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </Card>
    </div>
  );
}
