import type { Route } from "./+types/users";
import { requireRole } from "~/.server/auth/permissions";
import { listPeople } from "~/.server/people";
import type { PersonView } from "~/.server/openapi/responses/people";

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "lab_manager");
  const people = await listPeople();
  return Response.json(people.map((p): PersonView => ({ id: p.id, email: p.email, name: p.name, role: p.role, active: p.active, invited: !p.passwordHash })));
}
