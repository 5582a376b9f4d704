import { useFetcher } from "react-router";
import { Button, ButtonA } from "~/components/ui/button";
import { RowOutcome, type RowOutcomeData } from "~/components/row-outcome";

/** What the bookings page's action answers to a decision on one row. */
export type BookingRowOutcome = RowOutcomeData & { bookingId?: number };

/**
 * The buttons of one booking in the list, each sent without leaving the page (a fetcher per row),
 * so the decision or refusal is said here, beside the row that was clicked, in a region screen
 * readers announce; the address bar keeps the list's own address.
 */
export function BookingActions({ booking, canDecide, canCancel }: { booking: { id: number; state: string }; canDecide: boolean; canCancel: boolean }) {
  const fetcher = useFetcher<BookingRowOutcome>({ key: `booking-row-${booking.id}` });
  const busy = fetcher.state !== "idle";
  const outcome = fetcher.state === "idle" ? fetcher.data : undefined;
  const id = booking.id;
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap gap-2">
        {canDecide ? (
          <>
            <fetcher.Form method="post" action="/bookings">
              <input type="hidden" name="bookingId" value={id} />
              <Button type="submit" name="intent" value="approve" disabled={busy}>
                Approve
              </Button>
            </fetcher.Form>
            <fetcher.Form method="post" action="/bookings" className="flex flex-wrap items-center gap-2">
              <input type="hidden" name="bookingId" value={id} />
              <label className="sr-only" htmlFor={`reason-${id}`}>
                Reason for declining booking #{id}
              </label>
              <input
                id={`reason-${id}`}
                name="reason"
                required
                minLength={3}
                maxLength={500}
                placeholder="Reason"
                className="min-h-12 rounded-lg border-2 border-line-strong bg-sheet px-3"
              />
              <Button tone="danger" type="submit" name="intent" value="decline" disabled={busy}>
                Decline
              </Button>
            </fetcher.Form>
          </>
        ) : null}
        {canCancel ? (
          <fetcher.Form method="post" action="/bookings">
            <input type="hidden" name="bookingId" value={id} />
            <Button tone="quiet" type="submit" name="intent" value="cancel" disabled={busy}>
              Cancel booking
            </Button>
          </fetcher.Form>
        ) : null}
        {booking.state === "approved" ? (
          <ButtonA tone="quiet" href={`/api/v1/bookings/${id}/ics`}>
            .ics
          </ButtonA>
        ) : null}
      </div>
      <RowOutcome outcome={outcome} testId={`booking-${id}-outcome`} />
    </div>
  );
}
