import type { Route } from "./+types/mail";
import { requireRole } from "~/.server/auth/permissions";
import { apiError } from "~/.server/http";
import { CapturedMail } from "~/.server/db";
import { usingFakeMail } from "~/.server/mail/send";
import type { CapturedMailView } from "~/.server/openapi/responses/people";

/** The fake mail server's inbox as JSON, for the lab manager (and scripted checks) in demo and test mode. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  if (!usingFakeMail) return apiError(404, "not_found", "Mail is sent through a real relay; nothing is captured here.");
  const to = new URL(request.url).searchParams.get("to");
  const rows = await CapturedMail.findAll({ order: [["id", "DESC"]], limit: 200 });
  const list = rows
    .filter((m) => !to || m.envelopeTo.toLowerCase().split(", ").includes(to.toLowerCase()))
    .map((m): CapturedMailView => ({
      id: m.id,
      from: m.envelopeFrom,
      to: m.envelopeTo.split(", "),
      subject: m.subject,
      text: m.textBody,
      receivedAt: m.receivedAt.toISOString(),
    }));
  return Response.json(list);
}
