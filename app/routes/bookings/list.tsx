import { Form, Link, data, useNavigation } from "react-router";
import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import { useState } from "react";
import type { Route } from "./+types/list";
import { readForm } from "~/.server/http";
import rbcStyles from "react-big-calendar/lib/css/react-big-calendar.css?url";
import weekStyles from "~/components/booking-week.css?url";
import { requireUser } from "~/.server/auth/permissions";
import { BookingError, approveBooking, cancelBooking, createBooking, declineBooking, listBookings, serializeBookings } from "~/.server/bookings";
import { createCalendarFeed, feedUrl, getCalendarFeed, revokeCalendarFeed } from "~/.server/booking-calendar";
import { listEquipment } from "~/.server/equipment";
import { getLabSettings, getLabTimeZone } from "~/.server/settings";
import { bookingFilterSchema, bookingRequestSchema, declineSchema } from "~/lib/validation/bookings";
import { bookingStateLabels, bookingStates, spinUpLeadS, tableBookingCaution, type BookingState } from "~/lib/bookings";
import { kindLabels } from "~/lib/equipment";
import { useLabTime } from "~/components/lab-time";
import { formatDuration, fromZonedInput, timeFormat, zonedDay } from "~/lib/time-format";
import { BookingWeek } from "~/components/booking-week";
import { BookingActions, type BookingRowOutcome } from "~/components/booking-actions";
import { Button } from "~/components/ui/button";
import { Card, PageHeader, Tag } from "~/components/ui/card";
import { SelectField, TextAreaField, TextField } from "~/components/ui/field";
import { Notice, FormProblem } from "~/components/ui/notice";
import { formText } from "~/lib/form-text";
import { numberOrNull } from "~/lib/number-input";
import { TableHead } from "~/components/ui/table-head";

export const meta: Route.MetaFunction = () => [{ title: "Bookings · Tankside" }];
export const links: Route.LinksFunction = () => [
  { rel: "stylesheet", href: rbcStyles },
  { rel: "stylesheet", href: weekStyles },
];

/** "2026-12-03" plus n calendar days. */
function addDays(day: string, n: number) {
  const [y, m, d] = day.split("-").map(Number) as [number, number, number];
  return new Date(Date.UTC(y, m - 1, d + n)).toISOString().slice(0, 10);
}
/** The Monday of a calendar day's week. */
function mondayOf(day: string) {
  const weekday = new Date(`${day}T12:00:00Z`).getUTCDay();
  return addDays(day, -((weekday + 6) % 7));
}

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const url = new URL(request.url);
  const parsed = bookingFilterSchema.safeParse(Object.fromEntries(url.searchParams));
  const filter = parsed.success ? parsed.data : { mine: false };
  const [items, settings, feed] = await Promise.all([listEquipment(), getLabSettings(), getCalendarFeed(user.id)]);
  const rows = await listBookings({
    equipmentId: "equipmentId" in filter ? filter.equipmentId : undefined,
    state: "state" in filter ? filter.state : undefined,
    from: "from" in filter && filter.from ? new Date(filter.from) : new Date(Date.now() - 7 * 86_400_000),
    to: "to" in filter && filter.to ? new Date(filter.to) : undefined,
    requesterId: filter.mine ? user.id : undefined,
  });
  const bookable = items.filter((i) => i.status === "in_service");
  const weekItemId = Number(url.searchParams.get("item")) || bookable.find((i) => i.kind === "table")?.id || bookable[0]?.id || 0;
  const weekParam = url.searchParams.get("week");
  // The week runs Monday 00:00 to Monday 00:00 on the lab's clock.
  const weekStart = mondayOf(
    weekParam && /^\d{4}-\d{2}-\d{2}$/.test(weekParam) && !Number.isNaN(Date.parse(`${weekParam}T12:00:00Z`))
      ? weekParam
      : zonedDay(new Date(), settings.timeZone),
  );
  const weekFrom = fromZonedInput(`${weekStart}T00:00`, settings.timeZone)!;
  const weekTo = fromZonedInput(`${addDays(weekStart, 7)}T00:00`, settings.timeZone)!;
  const weekRows = weekItemId
    ? (await listBookings({ equipmentId: weekItemId, from: weekFrom, to: weekTo })).filter((b) => b.state === "approved" || b.state === "requested")
    : [];
  // The form's fields are on the lab's clock: tomorrow (the lab's day), 10:00 to 12:00.
  const tomorrow = zonedDay(new Date(Date.now() + 86_400_000), settings.timeZone);
  return {
    user,
    filterProblem: parsed.success ? null : parsed.error.issues[0]!.message,
    filter: Object.fromEntries(url.searchParams),
    bookings: await serializeBookings(rows),
    items: items.map((i) => ({ id: i.id, name: i.name, kind: i.kind, status: i.status })),
    week: { itemId: weekItemId, start: weekStart, bookings: await serializeBookings(weekRows) },
    spinUpTimesToWait: settings.spinUpTimesToWait,
    feed: feed ? { prefix: feed.tokenPrefix, lastUsedAt: feed.lastUsedAt?.toISOString() ?? null } : null,
    defaults: { start: `${tomorrow}T10:00`, end: `${tomorrow}T12:00` },
  };
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

function StateTag({ state }: { state: BookingState }) {
  const tone = state === "approved" ? "agrees" : state === "requested" ? "caution" : state === "declined" ? "disagrees" : "neutral";
  return <Tag tone={tone}>{bookingStateLabels[state]}</Tag>;
}

export default function Bookings({ loaderData, actionData }: Route.ComponentProps) {
  const time = useLabTime();
  const outcome = actionData ?? {};
  const { user, items, bookings, week } = loaderData;
  const isManager = user.role === "lab_manager";
  const bookable = items.filter((i) => i.status === "in_service");
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: outcome.request,
    ...formCheck(bookingRequestSchema),
    defaultValue: { equipmentId: String(bookable.find((i) => i.kind === "table")?.id ?? ""), start: loaderData.defaults.start, end: loaderData.defaults.end },
  });
  const [chosen, setChosen] = useState(typeof fields.equipmentId.initialValue === "string" ? fields.equipmentId.initialValue : "");
  const [rate, setRate] = useState("");
  // The moment the page was drawn: which bookings have ended, read once rather than on every render.
  const [now] = useState(() => Date.now());
  const [depth, setDepth] = useState("");
  const [start, setStart] = useState(String(fields.start.initialValue ?? ""));
  const chosenItem = items.find((i) => String(i.id) === chosen);
  const formHasErrors = Object.keys(form.allErrors).length > 0;
  const rateRpm = numberOrNull(rate) ?? 0;
  const depthCm = numberOrNull(depth) ?? 0;
  const leadS = rateRpm > 0 && depthCm > 0 ? spinUpLeadS(depthCm / 100, rateRpm, loaderData.spinUpTimesToWait) : null;
  const startAt = start ? fromZonedInput(start, time.zone) : null;
  const proposedStart = leadS !== null && startAt ? new Date(Math.floor((startAt.getTime() - leadS * 1000) / 60_000) * 60_000) : null;
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
        <Card title="Request equipment time">
          <Form method="post" action="/bookings" className="flex flex-col gap-4" {...getFormProps(form)}>
            <input type="hidden" name="intent" value="request" />
            <FormProblem errors={form.errors} />
            <SelectField
              label="Equipment"
              name={fields.equipmentId.name}
              key={fields.equipmentId.key}
              defaultValue={chosen}
              error={fields.equipmentId.errors}
              onChange={(e) => setChosen(e.target.value)}
            >
              <option value="">Choose…</option>
              {bookable.map((i) => (
                <option key={i.id} value={i.id}>
                  {i.name} ({kindLabels[i.kind].toLowerCase()})
                </option>
              ))}
            </SelectField>
            <TextField
              label="Start"
              type="datetime-local"
              name={fields.start.name}
              key={fields.start.key}
              defaultValue={fields.start.initialValue}
              error={fields.start.errors}
              hint={`Lab time (${time.zone}).`}
              onChange={(e) => setStart(e.target.value)}
            />
            <TextField
              label="End"
              type="datetime-local"
              name={fields.end.name}
              key={fields.end.key}
              defaultValue={fields.end.initialValue}
              error={fields.end.errors}
            />
            <TextAreaField
              label="Purpose"
              name={fields.purpose.name}
              key={fields.purpose.key}
              defaultValue={fields.purpose.initialValue}
              error={fields.purpose.errors}
              maxLength={300}
              placeholder="e.g. Second-year lab, inertial circles"
            />
            {chosenItem?.kind === "table" ? (
              <>
                <p className="text-sm text-muted">For a run, give the planned rate and depth: Tankside works out how long the water needs to spin up.</p>
                <TextField
                  label="Planned rate"
                  name={fields.plannedRateRpm.name}
                  key={fields.plannedRateRpm.key}
                  defaultValue={fields.plannedRateRpm.initialValue as string | undefined}
                  error={fields.plannedRateRpm.errors}
                  unit="rpm"
                  inputMode="decimal"
                  onChange={(e) => setRate(e.target.value)}
                />
                <TextField
                  label="Planned water depth"
                  name={fields.plannedDepthCm.name}
                  key={fields.plannedDepthCm.key}
                  defaultValue={fields.plannedDepthCm.initialValue as string | undefined}
                  error={fields.plannedDepthCm.errors}
                  unit="cm"
                  inputMode="decimal"
                  onChange={(e) => setDepth(e.target.value)}
                />
                {leadS !== null ? (
                  <div data-testid="spin-up-proposal">
                    <Notice kind="info" title="Spin-up lead time">
                      {loaderData.spinUpTimesToWait} × τ = {formatDuration(leadS)} (τ = H/√(νΩ), water at ν = 1.0 × 10⁻⁶ m²/s).
                      {proposedStart ? ` Tankside proposes starting at ${time.dateTime(proposedStart)}.` : null}
                    </Notice>
                  </div>
                ) : null}
                <label className="flex min-h-12 items-center gap-3 font-bold">
                  <input type="checkbox" name={fields.addSpinUpLead.name} className="h-6 w-6" defaultChecked={fields.addSpinUpLead.initialValue === "on"} />
                  Start earlier by the spin-up lead time
                </label>
                {fields.addSpinUpLead.errors ? (
                  <p className="text-sm font-bold text-disagrees-ink" role="alert">
                    {fields.addSpinUpLead.errors[0]}
                  </p>
                ) : null}
                <Notice kind="caution">{tableBookingCaution}</Notice>
              </>
            ) : null}
            <Button type="submit" disabled={navigation.state === "submitting"}>
              Request booking
            </Button>
          </Form>
        </Card>

        <Card title={<span id="week">Week view{weekItem ? `: ${weekItem.name}` : ""}</span>}>
          <Form method="get" className="mb-4 flex flex-wrap items-end gap-3" preventScrollReset>
            <div className="min-w-64 flex-1">
              <SelectField label="Item" name="item" defaultValue={String(week.itemId || "")}>
                {items
                  .filter((i) => i.status !== "retired")
                  .map((i) => (
                    <option key={i.id} value={i.id}>
                      {i.name}
                    </option>
                  ))}
              </SelectField>
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

      <Card title="All bookings" className="mt-6">
        <Form method="get" className="mb-4 grid gap-3 md:grid-cols-5 md:items-end">
          <SelectField label="Equipment" name="equipmentId" defaultValue={loaderData.filter.equipmentId ?? ""}>
            <option value="">Any</option>
            {items.map((i) => (
              <option key={i.id} value={i.id}>
                {i.name}
              </option>
            ))}
          </SelectField>
          <SelectField label="State" name="state" defaultValue={loaderData.filter.state ?? ""}>
            <option value="">Any</option>
            {bookingStates.map((s) => (
              <option key={s} value={s}>
                {bookingStateLabels[s]}
              </option>
            ))}
          </SelectField>
          <TextField label="From" type="date" name="from" defaultValue={loaderData.filter.from ?? ""} hint="Default: a week ago" />
          <TextField label="To" type="date" name="to" defaultValue={loaderData.filter.to ?? ""} />
          <div className="flex flex-col gap-2">
            <label className="flex min-h-12 items-center gap-2 font-bold">
              <input type="checkbox" name="mine" value="1" defaultChecked={loaderData.filter.mine === "1"} className="h-6 w-6" /> Only mine
            </label>
            <Button tone="plain" type="submit">
              Filter
            </Button>
          </div>
        </Form>
        {loaderData.filterProblem ? <Notice kind="error">{loaderData.filterProblem}</Notice> : null}
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

      <Card title="Your approved bookings in your calendar" className="mt-6">
        <p className="mb-3">
          Calendar apps cannot sign in, so your feed has its own secret address. Anyone with the address sees your approved bookings; make a new one to shut the
          old one out.
        </p>
        {loaderData.feed ? (
          <p className="mb-3 text-sm text-muted">
            Current address starts with <code>{loaderData.feed.prefix}…</code>
            {loaderData.feed.lastUsedAt ? `, last read ${time.dateTime(loaderData.feed.lastUsedAt)}` : ", not read yet"}.
          </p>
        ) : null}
        <div className="flex flex-wrap gap-3">
          <Form method="post" action="/bookings" preventScrollReset>
            <Button tone="plain" type="submit" name="intent" value="feed">
              {loaderData.feed ? "Make a new feed address" : "Make my feed address"}
            </Button>
          </Form>
          {loaderData.feed ? (
            <Form method="post" action="/bookings" preventScrollReset>
              <Button tone="danger" type="submit" name="intent" value="feed-revoke">
                Stop the feed
              </Button>
            </Form>
          ) : null}
        </div>
      </Card>
    </div>
  );
}
