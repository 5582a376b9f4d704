import { Equipment } from "./db";
import type { EquipmentInput } from "~/lib/validation/equipment";
import type { EquipmentKind } from "~/lib/equipment";
import { DEFAULT_SCALE_TOLERANCE_PCT } from "~/lib/calibrations-applied";
import type { EquipmentView } from "./openapi/responses/equipment";

/** The API and page shape of an item; lengths in metres as stored, plus cm for forms. */
export function serializeEquipment(e: Equipment): EquipmentView {
  return {
    id: e.id,
    name: e.name,
    kind: e.kind,
    status: e.status,
    maker: e.maker,
    model: e.model,
    serialNumber: e.serialNumber,
    location: e.location,
    notes: e.notes,
    diameterM: e.diameterM,
    maxRateRpm: e.maxRateRpm,
    flatTable: e.flatTable,
    rateTolerancePct: e.rateTolerancePct,
    depthM: e.depthM,
    resolutionWidthPx: e.resolutionWidthPx,
    resolutionHeightPx: e.resolutionHeightPx,
    nominalFrameRateFps: e.nominalFrameRateFps,
    scaleTolerancePct: e.scaleTolerancePct,
    meterType: e.meterType,
    createdAt: e.createdAt.toISOString(),
    updatedAt: e.updatedAt.toISOString(),
  };
}
export type { EquipmentView };

function toColumns(input: EquipmentInput) {
  const k = input.kind;
  const cm = (v: number | undefined) => (v === undefined ? null : v / 100);
  return {
    kind: k,
    name: input.name,
    status: input.status,
    maker: input.maker ?? null,
    model: input.model ?? null,
    serialNumber: input.serialNumber ?? null,
    location: input.location ?? null,
    notes: input.notes ?? null,
    diameterM: k === "table" || k === "tank" ? cm(input.diameterCm) : null,
    maxRateRpm: k === "table" ? (input.maxRateRpm ?? null) : null,
    flatTable: k === "table" ? input.flatTable : null,
    rateTolerancePct: k === "table" ? (input.rateTolerancePct ?? 1) : null,
    depthM: k === "tank" ? cm(input.depthCm) : null,
    resolutionWidthPx: k === "camera" ? (input.resolutionWidthPx ?? null) : null,
    resolutionHeightPx: k === "camera" ? (input.resolutionHeightPx ?? null) : null,
    nominalFrameRateFps: k === "camera" ? (input.nominalFrameRateFps ?? null) : null,
    scaleTolerancePct: k === "camera" ? (input.scaleTolerancePct ?? DEFAULT_SCALE_TOLERANCE_PCT) : null,
    meterType: k === "rate_meter" ? (input.meterType ?? "tachometer") : null,
  };
}

export function createEquipment(input: EquipmentInput) {
  return Equipment.create(toColumns(input));
}

export async function updateEquipment(id: number, input: EquipmentInput) {
  const item = await Equipment.findByPk(id);
  if (!item) return null;
  if (item.kind !== input.kind) throw new RangeError("The kind of an item cannot change; retire it and add a new one.");
  const wasFlat = item.flatTable;
  await item.update(toColumns(input));
  // The theory check reads a table's flatness: its runs' checks are fitted again.
  if (item.kind === "table" && Boolean(wasFlat) !== Boolean(item.flatTable)) {
    await (await import("./runs/rechecks")).refitUnsignedRuns(null, { tableId: item.id });
  }
  return item;
}

export function listEquipment(filter: { kind?: EquipmentKind; inServiceOnly?: boolean } = {}) {
  return Equipment.findAll({
    where: {
      ...(filter.kind ? { kind: filter.kind } : {}),
      ...(filter.inServiceOnly ? { status: "in_service" } : {}),
    },
    order: [
      ["kind", "ASC"],
      ["name", "ASC"],
    ],
  });
}

export function getEquipment(id: number) {
  return Number.isInteger(id) && id > 0 ? Equipment.findByPk(id) : Promise.resolve(null);
}
