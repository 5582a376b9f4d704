import type { Route } from "./+types/mail-outbox";
import { requireRole } from "~/.server/auth/permissions";
import { listOutbox } from "~/.server/mail/outbox";

/** The outbox as JSON for the lab manager and scripted checks, with a real relay too; texts are left out. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  return Response.json(await listOutbox(200));
}
