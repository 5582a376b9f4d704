import { Form, Link } from "react-router";
import { useState } from "react";
import { bookingStateLabels, bookingStates, type BookingState } from "~/lib/bookings";
import { formatDuration } from "~/lib/time-format";
import { useLabTime } from "~/components/lab-time";
import { BookingActions } from "~/components/booking-actions";
import { Button } from "~/components/ui/button";
import { Card, Tag } from "~/components/ui/card";
import { choicesByName, choicesOf, SelectField, TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";
import { TableHead } from "~/components/ui/table-head";
import type { BookingsPage } from "~/.server/bookings-page";

function StateTag({ state }: { state: BookingState }) {
  const tone = state === "approved" ? "agrees" : state === "requested" ? "caution" : state === "declined" ? "disagrees" : "neutral";
  return <Tag tone={tone}>{bookingStateLabels[state]}</Tag>;
}

/** Every booking the filter lets through, each row with the decisions its reader may make. */
export function AllBookingsCard({
  user,
  items,
  bookings,
  filter,
  filterProblem,
}: Pick<BookingsPage, "user" | "items" | "bookings" | "filter" | "filterProblem">) {
  const time = useLabTime();
  const isManager = user.role === "lab_manager";
  // The moment the page was drawn: which bookings have ended, read once rather than on every render.
  const [now] = useState(() => Date.now());
  return (
    <Card title="All bookings" className="mt-6">
      <Form method="get" className="mb-4 grid gap-3 md:grid-cols-5 md:items-end">
        <SelectField label="Equipment" name="equipmentId" defaultValue={filter.equipmentId ?? ""} blank="Any" choices={choicesByName(items)} />
        <SelectField label="State" name="state" defaultValue={filter.state ?? ""} blank="Any" choices={choicesOf(bookingStates, bookingStateLabels)} />
        <TextField label="From" type="date" name="from" defaultValue={filter.from ?? ""} hint="Default: a week ago" />
        <TextField label="To" type="date" name="to" defaultValue={filter.to ?? ""} />
        <div className="flex flex-col gap-2">
          <label className="flex min-h-12 items-center gap-2 font-bold">
            <input type="checkbox" name="mine" value="1" defaultChecked={filter.mine === "1"} className="h-6 w-6" /> Only mine
          </label>
          <Button tone="plain" type="submit">
            Filter
          </Button>
        </div>
      </Form>
      {filterProblem ? <Notice kind="error">{filterProblem}</Notice> : null}
      {bookings.length === 0 ? (
        <p>No bookings match.</p>
      ) : (
        <div className="relative overflow-x-auto">
          <table className="w-full text-left">
            <TableHead columns={["Booking", "Item", "Slot", "Purpose", "State", "Actions"]} />
            <tbody>
              {bookings.map((b) => {
                const open = b.state === "requested" || b.state === "approved";
                const canCancel = open && (isManager || b.requesterId === user.id) && new Date(b.end).getTime() > now;
                return (
                  <tr key={b.id} className="border-b border-line align-top" data-testid={`booking-${b.id}`}>
                    <td className="py-3 pr-3">
                      <Link to={`/bookings/${b.id}`} className="font-bold">
                        #{b.id}
                      </Link>
                      <p className="text-sm text-muted">{b.requesterName}</p>
                    </td>
                    <td className="py-3 pr-3">{b.equipmentName}</td>
                    <td className="py-3 pr-3">
                      {time.range(b.start, b.end)}
                      {b.spinUpLeadMinutes ? <p className="text-sm text-muted">incl. {formatDuration(b.spinUpLeadMinutes * 60)} spin-up</p> : null}
                    </td>
                    <td className="py-3 pr-3">{b.purpose}</td>
                    <td className="py-3 pr-3">
                      <StateTag state={b.state} />
                      {b.declineReason ? <p className="text-sm">{b.declineReason}</p> : null}
                    </td>
                    <td className="py-3">
                      <BookingActions booking={b} canDecide={isManager && b.state === "requested"} canCancel={canCancel} />
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
    </Card>
  );
}
