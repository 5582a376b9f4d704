import { Link } from "react-router";
import type { Route } from "./+types/list";
import { requireUser } from "~/.server/auth/permissions";
import { listEquipment, serializeEquipment } from "~/.server/equipment";
import { equipmentKinds, kindPlural } from "~/lib/equipment";
import { ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { equipmentSummary, StatusTag } from "~/components/equipment-facts";

export const meta: Route.MetaFunction = () => [{ title: "Equipment · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const items = await listEquipment();
  return { canEdit: user.role === "lab_manager", items: items.map(serializeEquipment) };
}

export default function EquipmentList({ loaderData }: Route.ComponentProps) {
  return (
    <div>
      <PageHeader
        title="Equipment"
        subtitle="Tables, tanks, cameras and rate meters. Only items in service can be used for a run or booked."
        actions={
          loaderData.canEdit ? (
            <ButtonLink to="/equipment/new" tone="primary">
              Add equipment
            </ButtonLink>
          ) : null
        }
      />
      <div className="grid gap-6 md:grid-cols-2">
        {equipmentKinds.map((kind) => {
          const items = loaderData.items.filter((i) => i.kind === kind);
          return (
            <Card key={kind} title={kindPlural[kind]}>
              {items.length === 0 ? <p className="text-muted">None yet.</p> : null}
              <ul className="divide-y divide-line">
                {items.map((i) => (
                  <li key={i.id} className="flex items-start justify-between gap-3 py-3">
                    <div>
                      <Link to={`/equipment/${i.id}`} className="text-lg font-bold">
                        {i.name}
                      </Link>
                      <p className="text-sm text-muted">{equipmentSummary(i)}</p>
                    </div>
                    <StatusTag status={i.status} />
                  </li>
                ))}
              </ul>
            </Card>
          );
        })}
      </div>
    </div>
  );
}
