import type { Route } from "./+types/detail";
import { requireUser } from "~/.server/auth/permissions";
import { getEquipment, serializeEquipment } from "~/.server/equipment";
import { notFound, parseId } from "~/.server/http";
import { kindLabels } from "~/lib/equipment";
import { ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { equipmentSummary, StatusTag } from "~/components/equipment-facts";
import { equipmentCalibrationSummary } from "~/.server/calibration-views";
import { listBookings, serializeBookings } from "~/.server/bookings";
import { EquipmentBookings, EquipmentCalibrations } from "~/components/equipment-records";
import { formatNumber } from "~/lib/number-format";
import { FactRows } from "~/components/ui/facts";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.item.name ?? "Equipment"} · Tankside` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const item = await getEquipment(parseId(request, params.id, "That piece of equipment"));
  if (!item) throw notFound(request, "That piece of equipment");
  const [calibrations, bookings] = await Promise.all([
    equipmentCalibrationSummary(item.id, item.kind),
    listBookings({ equipmentId: item.id, from: new Date(), limit: 20 }).then((rows) =>
      serializeBookings(rows.filter((b) => b.state === "approved" || b.state === "requested")),
    ),
  ]);
  return { canEdit: user.role === "lab_manager", canRecord: user.role !== "instructor", item: serializeEquipment(item), calibrations, bookings };
}

export default function EquipmentDetail({ loaderData }: Route.ComponentProps) {
  const { item } = loaderData;
  const rows: [string, string | null][] = [
    ["Kind", kindLabels[item.kind]],
    ["Key figures", equipmentSummary(item)],
    ["Maker and model", [item.maker, item.model].filter(Boolean).join(" ") || null],
    ["Serial number", item.serialNumber],
    ["Location", item.location],
    [
      "Rate calibration tolerance",
      item.kind === "table" && item.rateTolerancePct !== null ? `${formatNumber(item.rateTolerancePct, 6)} % of the set rate` : null,
    ],
    [
      "Scale tolerance",
      item.kind === "camera" && item.scaleTolerancePct !== null ? `${formatNumber(item.scaleTolerancePct, 6)} % of the scale calibration` : null,
    ],
  ];
  return (
    <div>
      <PageHeader
        title={item.name}
        subtitle={<StatusTag status={item.status} />}
        actions={loaderData.canEdit ? <ButtonLink to={`/equipment/${item.id}/edit`}>Edit</ButtonLink> : null}
      />
      <div className="grid gap-6 lg:grid-cols-2">
        <Card title="About this item">
          <FactRows rows={rows} />
          {item.notes ? <p className="mt-4 whitespace-pre-wrap">{item.notes}</p> : null}
        </Card>
        <EquipmentCalibrations
          itemId={item.id}
          kinds={loaderData.calibrations.kinds}
          records={loaderData.calibrations.records}
          canRecord={loaderData.canRecord}
        />
        {item.status !== "retired" ? <EquipmentBookings itemId={item.id} isTable={item.kind === "table"} bookings={loaderData.bookings} /> : null}
      </div>
    </div>
  );
}
