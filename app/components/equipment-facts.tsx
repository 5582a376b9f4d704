import type { EquipmentKind } from "~/lib/equipment";
import { statusLabels, type EquipmentStatus } from "~/lib/equipment";
import { Tag } from "./ui/card";
import { formatCentimetres, formatNumber } from "~/lib/number-format";

interface Facts {
  kind: EquipmentKind;
  diameterM: number | null;
  maxRateRpm: number | null;
  flatTable: boolean | null;
  depthM: number | null;
  resolutionWidthPx: number | null;
  resolutionHeightPx: number | null;
  nominalFrameRateFps: number | null;
  meterType: string | null;
}

/** The one-line summary of an item's key figures, in the units people read on the bench. */
export function equipmentSummary(e: Facts): string {
  switch (e.kind) {
    case "table":
      return `${formatCentimetres(e.diameterM)} across · up to ${formatNumber(e.maxRateRpm, 6)} rpm · ${e.flatTable ? "flat top" : "paraboloidal or tank on top"}`;
    case "tank":
      return `${formatCentimetres(e.diameterM)} inner diameter · ${formatCentimetres(e.depthM)} deep`;
    case "camera":
      return `${e.resolutionWidthPx ?? "—"} × ${e.resolutionHeightPx ?? "—"} px · ${formatNumber(e.nominalFrameRateFps, 6)} frames/s nominal`;
    case "rate_meter":
      return e.meterType ?? "rate meter";
  }
}

export function StatusTag({ status }: { status: EquipmentStatus }) {
  const tone = status === "in_service" ? "agrees" : status === "out_of_service" ? "caution" : "neutral";
  return <Tag tone={tone}>{statusLabels[status]}</Tag>;
}
