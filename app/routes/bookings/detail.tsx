import { Form, data } from "react-router";
import type { Route } from "./+types/detail";
import { requireUser } from "~/.server/auth/permissions";
import { notFound, parseId, readForm } from "~/.server/http";
import { BookingError, approveBooking, cancelBooking, declineBooking, getBooking, serializeBooking } from "~/.server/bookings";
import { declineSchema } from "~/lib/validation/bookings";
import { bookingStateLabels, tableBookingCaution } from "~/lib/bookings";
import { useLabTime } from "~/components/lab-time";
import { formatDuration } from "~/lib/time-format";
import { Button, ButtonA, ButtonLink } from "~/components/ui/button";
import { Card, PageHeader, Tag } from "~/components/ui/card";
import { TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";
import { formText } from "~/lib/form-text";
import { formatNumber } from "~/lib/number-format";
import { FactRows } from "~/components/ui/facts";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Booking #${data?.booking.id ?? ""} · Tankside` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const booking = await getBooking(parseId(request, params.id, "That booking"));
  if (!booking) throw notFound(request, "That booking");
  return { user, booking: await serializeBooking(booking), now: Date.now() };
}

type Outcome = { notice?: string; problem?: string; reasonError?: string };

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request);
  const id = parseId(request, params.id, "That booking");
  const form = await readForm(request);
  const intent = formText(form, "intent");
  const mailNote = (mail: { queued: boolean }) => (mail.queued ? {} : { problem: "Saved, but there was nobody to e-mail about it." });
  try {
    if (intent === "approve") {
      const { mail } = await approveBooking(id, user);
      return data<Outcome>({ notice: "Approved. The requester has been told.", ...mailNote(mail) });
    }
    if (intent === "decline") {
      const parsed = declineSchema.safeParse({ reason: form.get("reason") });
      if (!parsed.success) return data<Outcome>({ reasonError: parsed.error.issues[0]!.message }, { status: 400 });
      const { mail } = await declineBooking(id, user, parsed.data.reason);
      return data<Outcome>({ notice: "Declined. The requester has been told why.", ...mailNote(mail) });
    }
    if (intent === "cancel") {
      const { mail } = await cancelBooking(id, user);
      return data<Outcome>({ notice: "Cancelled.", ...mailNote(mail) });
    }
    return data<Outcome>({ problem: "Unknown action." }, { status: 400 });
  } catch (err) {
    if (err instanceof BookingError) return data<Outcome>({ problem: err.message }, { status: err.status });
    throw err;
  }
}

export default function BookingDetail({ loaderData, actionData }: Route.ComponentProps) {
  const time = useLabTime();
  const { booking: b, user } = loaderData;
  const outcome = actionData ?? {};
  const isManager = user.role === "lab_manager";
  const open = b.state === "requested" || b.state === "approved";
  const canCancel = open && (isManager || b.requesterId === user.id) && new Date(b.end).getTime() > loaderData.now;
  const tone = b.state === "approved" ? "agrees" : b.state === "requested" ? "caution" : b.state === "declined" ? "disagrees" : "neutral";
  const rows: [string, string | null][] = [
    ["Item", b.equipmentName],
    ["Slot", time.range(b.start, b.end)],
    ["Purpose", b.purpose],
    ["Requested by", `${b.requesterName}, ${time.dateTime(b.createdAt)}`],
    ["Planned rate", b.plannedRateRpm === null ? null : `${formatNumber(b.plannedRateRpm, 6)} rpm`],
    ["Planned depth", b.plannedDepthCm === null ? null : `${formatNumber(b.plannedDepthCm, 6)} cm`],
    [
      "Spin-up lead time",
      b.spinUpLeadMinutes === null ? null : `${formatDuration(b.spinUpLeadMinutes * 60)}, included before the slot the requester asked for`,
    ],
    ["Decided", b.decidedAt ? `${b.decidedByName}, ${time.dateTime(b.decidedAt)}` : null],
    ["Reason for declining", b.declineReason],
    ["Cancelled", b.cancelledAt ? time.dateTime(b.cancelledAt) : null],
  ];
  return (
    <div>
      <PageHeader
        title={`Booking #${b.id}`}
        subtitle={<Tag tone={tone}>{bookingStateLabels[b.state]}</Tag>}
        actions={
          <>
            <ButtonLink to={`/bookings?item=${b.equipmentId}&week=${b.start.slice(0, 10)}#week`}>Week view</ButtonLink>
            <ButtonA href={`/api/v1/bookings/${b.id}/ics`}>Download .ics</ButtonA>
          </>
        }
      />
      <div className="mb-4 flex flex-col gap-3">
        {outcome.notice ? <Notice kind="success">{outcome.notice}</Notice> : null}
        {outcome.problem ? <Notice kind="error">{outcome.problem}</Notice> : null}
        {b.equipmentKind === "table" && open ? <Notice kind="caution">{tableBookingCaution}</Notice> : null}
      </div>
      <div className="grid gap-6 lg:grid-cols-2">
        <Card title="The booking">
          <FactRows rows={rows} />
        </Card>
        {(isManager && b.state === "requested") || canCancel ? (
          <Card title="Decide">
            <div className="flex flex-col gap-5">
              {isManager && b.state === "requested" ? (
                <>
                  <Form method="post">
                    <Button type="submit" name="intent" value="approve">
                      Approve booking
                    </Button>
                  </Form>
                  <Form method="post" className="flex flex-col gap-3">
                    <TextField
                      label="Reason for declining"
                      name="reason"
                      error={outcome.reasonError}
                      maxLength={500}
                      hint="The requester reads this in the e-mail."
                    />
                    <Button tone="danger" type="submit" name="intent" value="decline">
                      Decline booking
                    </Button>
                  </Form>
                </>
              ) : null}
              {canCancel ? (
                <Form method="post">
                  <Button tone="quiet" type="submit" name="intent" value="cancel">
                    Cancel booking
                  </Button>
                </Form>
              ) : null}
            </div>
          </Card>
        ) : null}
      </div>
    </div>
  );
}
