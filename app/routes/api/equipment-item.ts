import type { Route } from "./+types/equipment-item";
import { requireUser } from "~/.server/auth/permissions";
import { getEquipment, serializeEquipment } from "~/.server/equipment";
import { apiError, parseId } from "~/.server/http";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const item = await getEquipment(parseId(request, params.id, "That piece of equipment"));
  if (!item) return apiError(404, "not_found", "No equipment with that id.");
  return Response.json(serializeEquipment(item));
}
