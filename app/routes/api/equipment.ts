import type { Route } from "./+types/equipment";
import { requireUser } from "~/.server/auth/permissions";
import { listEquipment, serializeEquipment } from "~/.server/equipment";
import { apiError } from "~/.server/http";
import { equipmentFilterSchema } from "~/lib/validation/equipment";

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const parsed = equipmentFilterSchema.safeParse(Object.fromEntries(new URL(request.url).searchParams));
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    return apiError(400, "invalid_filter", issue?.message ?? "The filter is not valid.", { field: issue?.path.join(".") ?? "" });
  }
  const items = await listEquipment({ kind: parsed.data.kind, inServiceOnly: parsed.data.status === "in_service" });
  return Response.json(items.map(serializeEquipment));
}
