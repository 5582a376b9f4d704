import type { Route } from "./+types/me";
import { requireUser } from "~/.server/auth/permissions";
import type { MeView } from "~/.server/openapi/responses/people";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const me: MeView = { id: user.id, email: user.email, name: user.name, role: user.role };
  return Response.json(me);
}
