export const equipmentKinds = ["table", "tank", "camera", "rate_meter"] as const;
export type EquipmentKind = (typeof equipmentKinds)[number];
export const equipmentStatuses = ["in_service", "out_of_service", "retired"] as const;
export type EquipmentStatus = (typeof equipmentStatuses)[number];

export const kindLabels: Record<EquipmentKind, string> = {
  table: "Rotating table",
  tank: "Tank",
  camera: "Camera",
  rate_meter: "Rate meter",
};
export const kindPlural: Record<EquipmentKind, string> = {
  table: "Tables",
  tank: "Tanks",
  camera: "Cameras",
  rate_meter: "Rate meters",
};
export const statusLabels: Record<EquipmentStatus, string> = {
  in_service: "In service",
  out_of_service: "Out of service",
  retired: "Retired",
};
export const meterTypes = ["tachometer", "photogate", "stroboscope", "other"] as const;
