import { Link } from "react-router";
import type { Route } from "./+types/dashboard";
import { requireUser } from "~/.server/auth/permissions";
import { getDashboard } from "~/.server/dashboard";
import { demoPreparation } from "~/.server/demo-lab";
import { DemoPreparation } from "~/components/demo-preparation";
import type { RunListItem } from "~/.server/runs/queries";
import { ButtonLink } from "~/components/ui/button";
import { Card, PageHeader, Tag } from "~/components/ui/card";
import { VerdictTag } from "~/components/run-record/tags";
import { formatNumber } from "~/lib/number-format";
import { useLabTime } from "~/components/lab-time";
import { roleLabels } from "~/lib/roles";
import { runFiltersToSearch } from "~/lib/validation/run-filters";
import { calibrationFiltersToSearch } from "~/lib/validation/calibration-filters";
import { calibrationKindLabels } from "~/lib/calibrations";

export const meta: Route.MetaFunction = () => [{ title: "Today · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return { user, dashboard: await getDashboard(user), demo: demoPreparation() };
}

function RunLines({ items, empty }: { items: RunListItem[]; empty: string }) {
  const time = useLabTime();
  if (!items.length) return <p className="text-muted">{empty}</p>;
  return (
    <ul className="divide-y divide-line">
      {items.map((r) => (
        <li key={r.id}>
          <Link to={`/runs/${r.id}`} className="flex min-h-12 flex-wrap items-center gap-x-3 py-2 no-underline hover:bg-tank-50">
            <span className="font-mono text-lg font-bold">{r.label}</span>
            <span className="text-ink">{r.purpose}</span>
            <span className="text-sm text-muted">
              {r.table.name} · {formatNumber(r.setRateRpm)} rpm · {r.technician.name} · {time.date(r.createdAt)}
            </span>
          </Link>
        </li>
      ))}
    </ul>
  );
}

/**
 * How many a card lists, next to its title: the total when the list is complete, "5 of 7" when it
 * shows only the first few, so the number never claims more than the list below it holds.
 */
function CountTag({ shown, total, tone = "tank" }: { shown: number; total: number; tone?: "tank" | "disagrees" }) {
  const colours = tone === "disagrees" ? "bg-disagrees-bg text-disagrees-ink" : "bg-tank-50 text-tank-800";
  return (
    <span className={`ml-1 rounded-md px-2 font-mono ${colours}`} data-testid="count">
      {shown < total ? `${shown} of ${total}` : total}
    </span>
  );
}

function QueueCard({
  title,
  queue,
  empty,
  hint,
}: {
  title: string;
  queue: { state: string; total: number; items: RunListItem[]; technicianId: number | null } | null;
  empty: string;
  hint: string;
}) {
  if (!queue) return null;
  const link = `/runs${runFiltersToSearch({ state: queue.state as never, technician: queue.technicianId ?? undefined, sort: "createdAt", dir: "asc" })}`;
  return (
    <Card
      title={
        <>
          {title} <CountTag shown={queue.items.length} total={queue.total} />
        </>
      }
      actions={
        queue.total > queue.items.length ? (
          <Link to={link} className="inline-flex min-h-12 items-center font-bold">
            All {queue.total} →
          </Link>
        ) : null
      }
    >
      <p className="mb-2 text-sm text-muted">{hint}</p>
      <RunLines items={queue.items} empty={empty} />
    </Card>
  );
}

export default function Dashboard({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const { user, dashboard: d, demo } = loaderData;
  const logsRuns = user.role !== "instructor";
  return (
    <div>
      <PageHeader
        title={`Good to see you, ${user.name.split(" ")[0]}`}
        subtitle={`Signed in as ${roleLabels[user.role].toLowerCase()}.`}
        actions={
          <>
            {logsRuns ? (
              <ButtonLink to="/runs/new" tone="primary">
                Log a run
              </ButtonLink>
            ) : null}
            <ButtonLink to="/bookings">Book table time</ButtonLink>
            <ButtonLink to="/runs">All runs</ButtonLink>
          </>
        }
      />
      <DemoPreparation progress={demo} />

      <div className="grid gap-6 lg:grid-cols-2">
        <Card
          title={`Approved bookings, today and the next ${d.bookingDaysAhead} days`}
          actions={
            d.requestedCount ? (
              <Link to="/bookings" className="inline-flex min-h-12 items-center font-bold">
                {d.requestedCount} waiting for a decision →
              </Link>
            ) : null
          }
        >
          {d.bookings.length === 0 ? (
            <p className="text-muted">No approved bookings in these days.</p>
          ) : (
            <ul className="divide-y divide-line" data-testid="dashboard-bookings">
              {d.bookings.map((b) => (
                <li key={b.id}>
                  <Link to={`/bookings/${b.id}`} className="flex min-h-12 flex-wrap items-center gap-x-3 py-2 no-underline hover:bg-tank-50">
                    <span className="font-bold text-ink">{time.dayLabel(b.start)}</span>
                    <span className="font-mono">{time.timeRange(b.start, b.end)}</span>
                    <span className="text-ink">{b.equipmentName}</span>
                    <span className="text-sm text-muted">
                      {b.purpose} · {b.requesterName}
                    </span>
                    {b.mine ? <Tag tone="tank">Yours</Tag> : null}
                  </Link>
                </li>
              ))}
            </ul>
          )}
        </Card>

        {logsRuns ? (
          <Card title={`Calibrations due or expired (next ${d.calibrationDaysAhead} days)`}>
            {d.calibrations.length === 0 ? (
              <p className="text-muted">Every calibration is in force for the next {d.calibrationDaysAhead} days.</p>
            ) : (
              <ul className="divide-y divide-line" data-testid="dashboard-calibrations">
                {d.calibrations.map((c) => (
                  <li key={c.id}>
                    <Link to={`/calibrations/${c.id}`} className="flex min-h-12 flex-wrap items-center gap-x-3 py-2 no-underline hover:bg-tank-50">
                      {c.pastDue ? <Tag tone="disagrees">Expired</Tag> : <Tag tone="caution">Due</Tag>}
                      <span className="font-bold text-ink">{c.equipmentName}</span>
                      <span className="text-ink">{calibrationKindLabels[c.kind].toLowerCase()}</span>
                      <span className="text-sm text-muted">
                        {c.pastDue ? `was due ${time.date(c.dueAt)}` : `due ${time.date(c.dueAt)} (${c.daysLeft} day${c.daysLeft === 1 ? "" : "s"})`}
                      </span>
                    </Link>
                  </li>
                ))}
              </ul>
            )}
          </Card>
        ) : null}

        {d.calibrationSignOff ? (
          <Card
            title={
              <>
                {d.calibrationSignOff.mine ? "Your calibrations waiting for sign-off" : "Calibrations waiting for sign-off"}{" "}
                <CountTag shown={d.calibrationSignOff.items.length} total={d.calibrationSignOff.total} />
              </>
            }
            actions={
              d.calibrationSignOff.total > d.calibrationSignOff.items.length ? (
                <Link to={`/calibrations${calibrationFiltersToSearch({ standing: "draft" })}`} className="inline-flex min-h-12 items-center font-bold">
                  All {d.calibrationSignOff.total} →
                </Link>
              ) : null
            }
          >
            <p className="mb-2 text-sm text-muted">
              {d.calibrationSignOff.mine
                ? "Records you made that a lab manager has not signed off yet, oldest first. They count for runs once signed."
                : "Records not signed off yet, oldest first. A record counts for runs once it is signed off."}
            </p>
            {d.calibrationSignOff.items.length === 0 ? (
              <p className="text-muted">No calibration records are waiting for sign-off.</p>
            ) : (
              <ul className="divide-y divide-line" data-testid="dashboard-calibration-sign-off">
                {d.calibrationSignOff.items.map((c) => (
                  <li key={c.id}>
                    <Link to={`/calibrations/${c.id}`} className="flex min-h-12 flex-wrap items-center gap-x-3 py-2 no-underline hover:bg-tank-50">
                      <span className="font-bold text-ink">{c.equipmentName}</span>
                      <span className="text-ink">{calibrationKindLabels[c.kind].toLowerCase()}</span>
                      <span className="text-sm text-muted">
                        {c.performedByName} · {time.date(c.performedAt)}
                      </span>
                    </Link>
                  </li>
                ))}
              </ul>
            )}
          </Card>
        ) : null}

        <QueueCard
          title="Waiting for sign-off"
          queue={d.queues.signOff}
          empty="No checked runs are waiting for you."
          hint="Checked runs, oldest first. A signed-off run becomes read-only."
        />
        <QueueCard
          title={user.role === "technician" ? "Your runs waiting for tracking" : "Runs waiting for tracking"}
          queue={d.queues.tracking}
          empty="No runs have frames waiting to be tracked."
          hint="Frames are in; set up the view and start tracking."
        />
        <QueueCard
          title={user.role === "technician" ? "Your runs waiting for checking" : "Runs waiting for checking"}
          queue={d.queues.checking}
          empty="No tracked runs are waiting for a theory check."
          hint="Tracked, with no verdict yet. The theory check runs by itself when tracking ends; a run that stays here needs a look (open it to see why)."
        />

        <Card
          title={
            <>
              Recent verdicts that disagree <CountTag shown={d.disagreeing.items.length} total={d.disagreeing.total} tone="disagrees" />
            </>
          }
          actions={
            d.disagreeing.total > d.disagreeing.items.length ? (
              <Link to={`/runs${runFiltersToSearch({ verdict: "disagrees" })}`} className="inline-flex min-h-12 items-center font-bold">
                All {d.disagreeing.total} →
              </Link>
            ) : null
          }
        >
          <p className="mb-2 text-sm text-muted">Measured f does not match 2Ω: check the rate calibration, the scale and the view setup.</p>
          {d.disagreeing.items.length === 0 ? (
            <p className="text-muted">No disagreeing verdicts.</p>
          ) : (
            <ul className="divide-y divide-line">
              {d.disagreeing.items.map((r) => (
                <li key={r.id}>
                  <Link to={`/runs/${r.id}`} className="flex min-h-12 flex-wrap items-center gap-x-3 py-2 no-underline hover:bg-tank-50">
                    <VerdictTag verdict={r.verdict} />
                    <span className="font-mono text-lg font-bold">{r.label}</span>
                    <span className="text-ink">{r.purpose}</span>
                    <span className="text-sm text-muted">
                      {r.table.name} · {time.dateTime(r.createdAt)}
                    </span>
                  </Link>
                </li>
              ))}
            </ul>
          )}
        </Card>
      </div>
    </div>
  );
}
