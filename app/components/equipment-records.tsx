import { Link } from "react-router";
import type { CalibrationKind, CalibrationStanding } from "~/lib/calibrations";
import { calibrationKindLabels } from "~/lib/calibrations";
import { bookingStateLabels, tableBookingCaution, type BookingState } from "~/lib/bookings";
import { useLabTime } from "~/components/lab-time";
import { ButtonLink } from "./ui/button";
import { Card, Tag } from "./ui/card";
import { Notice } from "./ui/notice";
import { StandingTag, calibrationResult } from "./calibration-facts";
import { TableHead } from "~/components/ui/table-head";

type RecordRow = Parameters<typeof calibrationResult>[0] & {
  id: number;
  kind: CalibrationKind;
  performedAt: string;
  dueAt: string;
  standing: CalibrationStanding;
  performedByName: string;
};

/** The calibration section of an equipment page: what is in force per kind, past-due flags, and the history. */
export function EquipmentCalibrations({
  itemId,
  kinds,
  records,
  canRecord,
}: {
  itemId: number;
  kinds: { kind: CalibrationKind; current: { id: number; standing: CalibrationStanding; dueAt: string } | null }[];
  records: RecordRow[];
  canRecord: boolean;
}) {
  const time = useLabTime();
  if (kinds.length === 0) return null;
  const pastDue = kinds.filter((k) => k.current?.standing === "past_due");
  return (
    <Card title="Calibrations">
      {pastDue.length ? (
        <div className="mb-4">
          <Notice kind="error" title="Past due">
            {pastDue.map((k) => `${calibrationKindLabels[k.kind]} was due ${time.date(k.current!.dueAt)}`).join("; ")}. Runs made with this item are flagged
            until a new record is signed off.
          </Notice>
        </div>
      ) : null}
      <ul className="mb-4 flex flex-col gap-3">
        {kinds.map((k) => (
          <li key={k.kind} className="flex flex-wrap items-center justify-between gap-3">
            <span>
              <span className="font-bold">{calibrationKindLabels[k.kind]}: </span>
              {k.current ? (
                <>
                  <StandingTag standing={k.current.standing} /> <Link to={`/calibrations/${k.current.id}`}>record #{k.current.id}</Link>, due{" "}
                  {time.date(k.current.dueAt)}
                </>
              ) : (
                <Tag tone="caution">None signed off</Tag>
              )}
            </span>
            {canRecord ? (
              <ButtonLink to={`/calibrations/new?equipmentId=${itemId}&kind=${k.kind}`} tone="quiet">
                Record
              </ButtonLink>
            ) : null}
          </li>
        ))}
      </ul>
      {records.length ? (
        <table className="w-full text-left text-sm">
          <TableHead columns={["Record", "Done", "Result", "Standing"]} compact />
          <tbody>
            {records.map((r) => (
              <tr key={r.id} className="border-b border-line align-top">
                <td className="py-2 pr-3">
                  <Link to={`/calibrations/${r.id}`}>
                    {calibrationKindLabels[r.kind]} #{r.id}
                  </Link>
                </td>
                <td className="py-2 pr-3">
                  {time.date(r.performedAt)}, {r.performedByName}
                </td>
                <td className="py-2 pr-3">{calibrationResult(r)}</td>
                <td className="py-2">
                  <StandingTag standing={r.standing} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p className="text-muted">No calibration records yet.</p>
      )}
    </Card>
  );
}

/** The coming bookings of an item, with the way to the week view and the request form. */
export function EquipmentBookings({
  itemId,
  isTable,
  bookings,
}: {
  itemId: number;
  isTable: boolean;
  bookings: { id: number; start: string; end: string; purpose: string; state: BookingState; requesterName: string }[];
}) {
  const time = useLabTime();
  return (
    <Card
      title="Bookings"
      actions={
        <ButtonLink to={`/bookings?item=${itemId}#week`} tone="quiet">
          Week view and request
        </ButtonLink>
      }
    >
      {isTable ? <p className="mb-3 text-sm text-muted">{tableBookingCaution}</p> : null}
      {bookings.length ? (
        <ul className="flex flex-col gap-2">
          {bookings.map((b) => (
            <li key={b.id}>
              <Link to={`/bookings/${b.id}`}>{time.range(b.start, b.end)}</Link> · {b.purpose} ({b.requesterName}){" "}
              <Tag tone={b.state === "approved" ? "agrees" : "caution"}>{bookingStateLabels[b.state]}</Tag>
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-muted">Nothing booked from now on.</p>
      )}
    </Card>
  );
}
