import type { Route } from "./+types/equipment";
import { requireUser } from "~/.server/auth/permissions";
import { listEquipment, serializeEquipment } from "~/.server/equipment";
import { apiError } from "~/.server/http";
import { equipmentKinds, type EquipmentKind } from "~/lib/equipment";

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const url = new URL(request.url);
  const kind = url.searchParams.get("kind");
  if (kind && !(equipmentKinds as readonly string[]).includes(kind)) {
    return apiError(400, "invalid_filter", `kind must be one of ${equipmentKinds.join(", ")}.`);
  }
  const items = await listEquipment({ kind: (kind as EquipmentKind) || undefined, inServiceOnly: url.searchParams.get("status") === "in_service" });
  return Response.json(items.map(serializeEquipment));
}
