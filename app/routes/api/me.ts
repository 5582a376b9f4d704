import type { Route } from "./+types/me";
import { requireUser } from "~/.server/auth/permissions";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return Response.json({ id: user.id, email: user.email, name: user.name, role: user.role });
}
