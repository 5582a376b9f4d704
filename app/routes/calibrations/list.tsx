import { data, Form, Link, useSubmit } from "react-router";
import type { Route } from "./+types/list";
import { can, requireCapability } from "~/.server/auth/permissions";
import { listCalibrationsDueOrExpired } from "~/.server/calibrations-in-force";
import { listCalibrations, serializeCalibrations } from "~/.server/calibration-views";
import { getLabSettings } from "~/.server/settings";
import { calibrationKindLabels, calibrationKinds, standingLabels } from "~/lib/calibrations";
import { calibrationMatches, calibrationStandings, parseCalibrationFilters, type CalibrationFilters } from "~/lib/validation/calibration-filters";
import { useLabTime } from "~/components/lab-time";
import { Button, ButtonLink } from "~/components/ui/button";
import { choicesByName, choicesOf, SelectField, TextField } from "~/components/ui/field";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { StandingTag, calibrationResult } from "~/components/calibration-facts";
import { TableHead } from "~/components/ui/table-head";

export const meta: Route.MetaFunction = () => [{ title: "Calibrations · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCapability(request, "read_calibrations");
  const settings = await getLabSettings();
  const parsed = parseCalibrationFilters(new URL(request.url).searchParams);
  const [due, all] = await Promise.all([listCalibrationsDueOrExpired(settings.calibrationReminderDays), listCalibrations()]);
  const everyRecord = await serializeCalibrations(all);
  // The items that have records, for the filter's choices.
  const items = [...new Map(everyRecord.map((r) => [r.equipmentId, r.equipmentName])).entries()]
    .map(([id, name]) => ({ id, name }))
    .sort((a, b) => a.name.localeCompare(b.name));
  const filters: CalibrationFilters = parsed.ok ? parsed.filters : {};
  const records = parsed.ok ? everyRecord.filter((r) => calibrationMatches(r, filters)) : [];
  // Due and past-due first, then drafts awaiting sign-off, then the rest newest first.
  const rank = (id: number, standing: string) => (due.some((d) => d.id === id) ? 0 : standing === "draft" ? 1 : 2);
  records.sort((a, b) => rank(a.id, a.standing) - rank(b.id, b.standing) || b.performedOn.localeCompare(a.performedOn));
  const body = {
    due,
    records,
    total: everyRecord.length,
    items,
    filters,
    filterError: parsed.ok ? null : { message: parsed.message, field: parsed.field },
    reminderDays: settings.calibrationReminderDays,
    canRecord: can(user, "record_calibration"),
  };
  return parsed.ok ? body : data(body, { status: 400 });
}

export default function Calibrations({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const { due, records, filters, filterError } = loaderData;
  const submit = useSubmit();
  const filtered = Boolean(filters.kind || filters.equipment || filters.standing || filters.q);
  return (
    <div>
      <PageHeader
        title="Calibrations"
        subtitle="Every record, with what is due or past due first. Filter here; the address is a link to this exact view."
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
      <Form
        method="get"
        // Choices apply at once; typed search text waits for Enter or the button.
        onChange={(e) => {
          if ((e.target as HTMLElement).tagName === "SELECT") void submit(e.currentTarget);
        }}
        className="no-print mb-4 grid gap-4 rounded-card border border-line bg-sheet p-4 md:grid-cols-4"
        aria-label="Filter calibrations"
        key={JSON.stringify(filters)}
      >
        <SelectField label="Kind" name="kind" defaultValue={filters.kind ?? ""} blank="Any kind" choices={choicesOf(calibrationKinds, calibrationKindLabels)} />
        <SelectField label="Item" name="equipment" defaultValue={filters.equipment ?? ""} blank="Any item" choices={choicesByName(loaderData.items)} />
        <SelectField
          label="Standing"
          name="standing"
          defaultValue={filters.standing ?? ""}
          blank="Any standing"
          choices={choicesOf(calibrationStandings, standingLabels)}
        />
        <TextField label="Text in item, person or notes" name="q" type="search" defaultValue={filters.q ?? ""} maxLength={100} />
        <div className="flex flex-wrap items-end gap-3 md:col-span-4">
          <Button type="submit">Search</Button>
          {filtered || filterError ? (
            <ButtonLink to="/calibrations" tone="quiet">
              Clear filters
            </ButtonLink>
          ) : null}
        </div>
      </Form>

      {filterError ? (
        <div className="mb-6">
          <Notice kind="error" title="These filters cannot be used">
            <p>{filterError.message}</p>
            <p className="mt-2">
              <Link to="/calibrations">Show every record</Link>
            </p>
          </Notice>
        </div>
      ) : null}

      {filterError ? null : (
        <Card title={filtered ? `${records.length} of ${loaderData.total} records match` : `${records.length} records`}>
          {records.length === 0 ? (
            <p className="text-muted">No records match these filters.</p>
          ) : (
            <div className="overflow-x-auto">
              <table className="w-full text-left">
                <TableHead columns={["Record", "Item", "Done", "Due", "Result", "Standing"]} />
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
          )}
        </Card>
      )}
    </div>
  );
}
