import type { Route } from "./+types/mail";
import { requireRole } from "~/.server/auth/permissions";
import { CapturedMail } from "~/.server/db";
import { usingFakeMail } from "~/.server/mail/send";
import { listOutbox, MAX_ATTEMPTS, sendAgain } from "~/.server/mail/outbox";
import { readForm } from "~/.server/http";
import { data } from "react-router";
import { OutboxRow } from "~/components/outbox-row";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { useLabTime } from "~/components/lab-time";
import { ScrollRegion } from "~/components/ui/scroll-region";
import { TableHead } from "~/components/ui/table-head";

export const meta: Route.MetaFunction = () => [{ title: "Mail · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  const outbox = await listOutbox(100);
  if (!usingFakeMail) return { outbox, captured: null, maxAttempts: MAX_ATTEMPTS };
  const rows = await CapturedMail.findAll({ order: [["id", "DESC"]], limit: 100 });
  return {
    outbox,
    maxAttempts: MAX_ATTEMPTS,
    captured: rows.map((m) => ({
      id: m.id,
      to: m.envelopeTo,
      from: m.envelopeFrom,
      subject: m.subject,
      text: m.textBody,
      receivedAt: m.receivedAt.toISOString(),
    })),
  };
}

/** A failed message sent again from its row (OutboxRow); the answer is said in that row. */
export async function action({ request }: Route.ActionArgs) {
  await requireRole(request, "lab_manager");
  const form = await readForm(request);
  const id = Number(form.get("id"));
  if (form.get("intent") !== "send-again" || !Number.isInteger(id) || id <= 0) return data({ problem: "Unknown action." }, { status: 400 });
  const outcome = await sendAgain(id);
  return outcome.ok ? { notice: "Queued again; it is being sent now." } : data({ problem: outcome.message }, { status: outcome.status });
}

export default function Mail({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const { outbox, captured, maxAttempts } = loaderData;
  return (
    <div>
      <PageHeader
        title={captured ? "Captured mail" : "Outgoing mail"}
        subtitle={
          captured
            ? "What Tankside sent while no real mail relay is set (SMTP_URL unset). Nothing here left this computer."
            : "Every e-mail Tankside queued and whether the mail relay took it."
        }
      />
      <Card title="Outbox" className="mb-6">
        <p className="mb-3 text-sm text-muted">
          A failed attempt is tried again after 1 minute, then after twice the wait each time up to an hour; after {maxAttempts} failed attempts the message is
          marked failed; a failed message can be sent again from its row. Texts of sent messages are not kept: they may hold someone's single-use link.
        </p>
        {outbox.length === 0 ? (
          <Notice>Nothing queued or sent yet.</Notice>
        ) : (
          <ScrollRegion label="Outgoing mail">
            <table className="w-full text-left">
              <TableHead columns={["Queued", "To", "Subject", "State", "Details"]} />
              <tbody>
                {outbox.map((m) => (
                  <OutboxRow key={m.id} m={m} />
                ))}
              </tbody>
            </table>
          </ScrollRegion>
        )}
      </Card>
      {captured ? (
        <>
          <h2 className="mb-3">Received by the built-in mail server</h2>
          {captured.length === 0 ? <Notice>No mail yet.</Notice> : null}
          <div className="flex flex-col gap-4">
            {captured.map((m) => (
              <Card key={m.id} title={m.subject}>
                <p className="text-sm text-muted">
                  to <span className="font-bold text-ink">{m.to}</span> · {time.dateTime(m.receivedAt)}
                </p>
                <pre className="mt-3 whitespace-pre-wrap break-words font-sans">{m.text}</pre>
              </Card>
            ))}
          </div>
        </>
      ) : null}
    </div>
  );
}
