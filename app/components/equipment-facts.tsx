import type { EquipmentKind } from "~/lib/equipment";
import { statusLabels, type EquipmentStatus } from "~/lib/equipment";
import { Tag } from "./ui/card";
import { formatNumber } from "~/lib/number-format";

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

const cm = (m: number | null) => (m === null ? "—" : `${formatNumber(m * 100, 4)} cm`);

/** The one-line summary of an item's key figures, in the units people read on the bench. */
export function equipmentSummary(e: Facts): string {
  switch (e.kind) {
    case "table":
      return `${cm(e.diameterM)} across · up to ${e.maxRateRpm ?? "—"} rpm · ${e.flatTable ? "flat top" : "paraboloidal or tank on top"}`;
    case "tank":
      return `${cm(e.diameterM)} inner diameter · ${cm(e.depthM)} deep`;
    case "camera":
      return `${e.resolutionWidthPx ?? "—"} × ${e.resolutionHeightPx ?? "—"} px · ${e.nominalFrameRateFps ?? "—"} frames/s nominal`;
    case "rate_meter":
      return e.meterType ?? "rate meter";
  }
}

export function StatusTag({ status }: { status: EquipmentStatus }) {
  const tone = status === "in_service" ? "agrees" : status === "out_of_service" ? "caution" : "neutral";
  return <Tag tone={tone}>{statusLabels[status]}</Tag>;
}
