import { Form, data } from "react-router";
import { parseWithZod } from "@conform-to/zod/v4";
import type { SubmissionResult } from "@conform-to/react";
import type { Route } from "./+types/list";
import { readForm } from "~/.server/http";
import rbcStyles from "react-big-calendar/lib/css/react-big-calendar.css?url";
import weekStyles from "~/components/booking-week.css?url";
import { requireUser } from "~/.server/auth/permissions";
import { BookingError, approveBooking, cancelBooking, createBooking, declineBooking } from "~/.server/bookings";
import { bookingsPage } from "~/.server/bookings-page";
import { createCalendarFeed, feedUrl, revokeCalendarFeed } from "~/.server/booking-calendar";
import { getLabTimeZone } from "~/.server/settings";
import { bookingRequestSchema, declineSchema } from "~/lib/validation/bookings";
import { fromZonedInput, timeFormat } from "~/lib/time-format";
import { BookingWeek } from "~/components/booking-week";
import { type BookingRowOutcome } from "~/components/booking-actions";
import { AllBookingsCard } from "~/components/bookings/bookings-table";
import { BookingRequestCard, useBookingRequestForm } from "~/components/bookings/request-form";
import { CalendarFeedCard } from "~/components/bookings/calendar-feed-card";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { choicesByName, SelectField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";
import { formText } from "~/lib/form-text";

export const meta: Route.MetaFunction = () => [{ title: "Bookings · Tankside" }];
export const links: Route.LinksFunction = () => [
  { rel: "stylesheet", href: rbcStyles },
  { rel: "stylesheet", href: weekStyles },
];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return bookingsPage(user, new URL(request.url));
}

type Outcome = BookingRowOutcome & { request?: SubmissionResult<string[]>; feedUrl?: string };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await readForm(request);
  const intent = formText(form, "intent");
  const id = Number(form.get("bookingId"));
  const mailNote = (mail: { queued: boolean }, who: string) => (mail.queued ? {} : { problem: `Saved, but no e-mail could be addressed to ${who}.` });
  try {
    if (intent === "request") {
      const submission = parseWithZod(form, { schema: bookingRequestSchema });
      if (submission.status !== "success") return data<Outcome>({ request: submission.reply() }, { status: 400 });
      const v = submission.value;
      const time = timeFormat(await getLabTimeZone());
      try {
        const { booking, mail } = await createBooking(
          {
            equipmentId: v.equipmentId,
            start: fromZonedInput(v.start, time.zone) ?? new Date(Number.NaN),
            end: fromZonedInput(v.end, time.zone) ?? new Date(Number.NaN),
            purpose: v.purpose,
            plannedRateRpm: v.plannedRateRpm,
            plannedDepthM: v.plannedDepthCm === undefined ? undefined : v.plannedDepthCm / 100,
            addSpinUpLead: v.addSpinUpLead,
          },
          user,
        );
        return data<Outcome>({
          request: submission.reply({ resetForm: true }),
          notice: `Booking #${booking.id} requested for ${time.range(booking.startAt, booking.endAt)}. The lab managers have been told.`,
          ...mailNote(mail, "the lab managers"),
        });
      } catch (err) {
        if (err instanceof BookingError) {
          const field = err.field && ["equipmentId", "start", "end", "addSpinUpLead"].includes(err.field) ? err.field : null;
          return data<Outcome>(
            { request: submission.reply(field ? { fieldErrors: { [field]: [err.message] } } : { formErrors: [err.message] }) },
            { status: err.status },
          );
        }
        throw err;
      }
    }
    if (intent === "approve") {
      const { booking, mail } = await approveBooking(id, user);
      return data<Outcome>({ bookingId: id, notice: `Booking #${booking.id} approved.`, ...mailNote(mail, "the requester") });
    }
    if (intent === "decline") {
      const parsed = declineSchema.safeParse({ reason: form.get("reason") });
      if (!parsed.success) return data<Outcome>({ bookingId: id, problem: `Booking #${id}: ${parsed.error.issues[0]!.message}` }, { status: 400 });
      const { booking, mail } = await declineBooking(id, user, parsed.data.reason);
      return data<Outcome>({ bookingId: id, notice: `Booking #${booking.id} declined.`, ...mailNote(mail, "the requester") });
    }
    if (intent === "cancel") {
      const { booking, mail } = await cancelBooking(id, user);
      return data<Outcome>({ bookingId: id, notice: `Booking #${booking.id} cancelled.`, ...mailNote(mail, "the people concerned") });
    }
    if (intent === "feed") {
      const token = await createCalendarFeed(user.id);
      return data<Outcome>({ feedUrl: feedUrl(token), notice: "Your calendar feed address is ready. Copy it now: Tankside keeps only a fingerprint of it." });
    }
    if (intent === "feed-revoke") {
      await revokeCalendarFeed(user.id);
      return data<Outcome>({ notice: "Your calendar feed address no longer works." });
    }
    return data<Outcome>({ problem: "Unknown action." }, { status: 400 });
  } catch (err) {
    if (err instanceof BookingError) return data<Outcome>({ bookingId: id, problem: `Booking #${id}: ${err.message}` }, { status: err.status });
    throw err;
  }
}

export default function Bookings({ loaderData, actionData }: Route.ComponentProps) {
  const outcome = actionData ?? {};
  const { items, week } = loaderData;
  const [form, fields] = useBookingRequestForm(items, loaderData.defaults, outcome.request);
  const formHasErrors = Object.keys(form.allErrors).length > 0;
  const weekItem = items.find((i) => i.id === week.itemId);

  return (
    <div>
      <PageHeader title="Bookings" subtitle="Ask for equipment time; a lab manager approves it. Approved time never overlaps on one item." />
      <div className="mb-4 flex flex-col gap-3">
        {/* The last answer gives way as soon as the form shows new errors, so an old "requested" never sits beside them. */}
        {outcome.notice && !formHasErrors ? <Notice kind="success">{outcome.notice}</Notice> : null}
        {outcome.problem && !formHasErrors ? <Notice kind="error">{outcome.problem}</Notice> : null}
        {outcome.feedUrl ? (
          <Notice kind="info" title="Calendar feed address">
            <code className="break-all" data-testid="feed-url">
              {outcome.feedUrl}
            </code>
          </Notice>
        ) : null}
      </div>

      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[1fr_2fr]">
        <BookingRequestCard items={items} spinUpTimesToWait={loaderData.spinUpTimesToWait} form={form} fields={fields} />

        <Card title={<span id="week">Week view{weekItem ? `: ${weekItem.name}` : ""}</span>}>
          <Form method="get" className="mb-4 flex flex-wrap items-end gap-3" preventScrollReset>
            <div className="min-w-64 flex-1">
              <SelectField
                label="Item"
                name="item"
                defaultValue={String(week.itemId || "")}
                choices={choicesByName(items.filter((i) => i.status !== "retired"))}
              />
            </div>
            <input type="hidden" name="week" value={week.start} />
            <Button tone="plain" type="submit">
              Show
            </Button>
          </Form>
          {week.itemId ? <BookingWeek bookings={week.bookings} week={week.start} itemId={week.itemId} /> : <p>No equipment to show.</p>}
          <p className="mt-2 text-sm text-muted">Solid: approved. Hatched outline: requested, not yet decided. Select a booking to open it.</p>
        </Card>
      </div>

      <AllBookingsCard
        user={loaderData.user}
        items={items}
        bookings={loaderData.bookings}
        filter={loaderData.filter}
        filterProblem={loaderData.filterProblem}
      />

      <CalendarFeedCard feed={loaderData.feed} />
    </div>
  );
}
