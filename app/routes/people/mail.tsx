import { data } from "react-router";
import type { Route } from "./+types/mail";
import { requireRole } from "~/.server/auth/permissions";
import { CapturedMail } from "~/.server/db";
import { usingFakeMail } from "~/.server/mail/send";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { formatDateTime } from "~/lib/format";

export const meta: Route.MetaFunction = () => [{ title: "Captured mail · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  if (!usingFakeMail) throw data("Mail goes through a real relay here; nothing is captured.", { status: 404 });
  const rows = await CapturedMail.findAll({ order: [["id", "DESC"]], limit: 100 });
  return {
    messages: rows.map((m) => ({ id: m.id, to: m.envelopeTo, from: m.envelopeFrom, subject: m.subject, text: m.textBody, receivedAt: m.receivedAt.toISOString() })),
  };
}

export default function Mail({ loaderData }: Route.ComponentProps) {
  return (
    <div>
      <PageHeader title="Captured mail" subtitle="What Tankside sent while no real mail relay is set (SMTP_URL unset). Nothing here left this computer." />
      {loaderData.messages.length === 0 ? <Notice>No mail yet.</Notice> : null}
      <div className="flex flex-col gap-4">
        {loaderData.messages.map((m) => (
          <Card key={m.id} title={m.subject}>
            <p className="text-sm text-muted">
              to <span className="font-bold text-ink">{m.to}</span> · {formatDateTime(m.receivedAt)}
            </p>
            <pre className="mt-3 whitespace-pre-wrap break-words font-sans">{m.text}</pre>
          </Card>
        ))}
      </div>
    </div>
  );
}
