import { useFetcher } from "react-router";
import type { OutboxView } from "~/.server/mail/outbox";
import { useLabTime } from "~/components/lab-time";
import { RowOutcome, type RowOutcomeData } from "~/components/row-outcome";
import { Button } from "~/components/ui/button";
import { Tag } from "~/components/ui/card";

const stateTone = { queued: "caution", sent: "agrees", failed: "disagrees" } as const;
const stateLabel = { queued: "Queued", sent: "Sent", failed: "Failed" } as const;

/** A queued message: being sent right now, or waiting for its next try (after how many failed ones). */
function queuedDetail(m: OutboxView, dateTime: (iso: string) => string): string {
  if (m.sending) return `sending now (attempt ${m.attempts})`;
  const next = m.nextAttemptAt ? `try ${dateTime(m.nextAttemptAt)}` : "";
  return m.attempts ? `${m.attempts} failed; next ${next}` : next;
}

/**
 * One message of the outbox. A failed one can be sent again from its row; the row's own fetcher
 * sends it, so the page stays where it is and the answer is said in this row.
 */
export function OutboxRow({ m }: { m: OutboxView }) {
  const time = useLabTime();
  const fetcher = useFetcher<RowOutcomeData>({ key: `outbox-row-${m.id}` });
  const busy = fetcher.state !== "idle";
  return (
    <tr className="border-b border-line align-top" data-testid={`outbox-${m.id}`}>
      <td className="py-3 pr-3 text-sm">{time.dateTime(m.createdAt)}</td>
      <td className="py-3 pr-3 text-sm break-all">{m.recipients.join(", ") || "—"}</td>
      <td className="py-3 pr-3">{m.subject}</td>
      <td className="py-3 pr-3">
        <Tag tone={stateTone[m.state]}>{stateLabel[m.state]}</Tag>
      </td>
      <td className="py-3 text-sm">
        {m.state === "sent" && m.sentAt ? `${time.dateTime(m.sentAt)}` : null}
        {m.state === "queued" ? queuedDetail(m, (iso) => time.dateTime(iso)) : null}
        {m.state === "failed" ? `gave up after ${m.attempts} attempts` : null}
        {m.lastError && m.state !== "sent" ? <p className="text-muted break-words">Last error: {m.lastError}</p> : null}
        {m.state === "failed" ? (
          <fetcher.Form method="post" action="/mail" className="mt-2">
            <input type="hidden" name="id" value={m.id} />
            <Button tone="plain" type="submit" name="intent" value="send-again" disabled={busy}>
              Send again
            </Button>
            <p className="mt-1 text-muted">A link in it may have expired since; if so, send a fresh invitation or reset instead.</p>
          </fetcher.Form>
        ) : null}
        <RowOutcome outcome={busy ? undefined : fetcher.data} testId={`outbox-${m.id}-outcome`} />
      </td>
    </tr>
  );
}
