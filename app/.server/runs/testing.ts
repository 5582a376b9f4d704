import { Equipment, User } from "../db";
import type { CurrentUser } from "../auth/permissions";
import type { Role } from "~/lib/roles";

const blank = { maker: null, model: null, serialNumber: null, location: null, notes: null, diameterM: null, maxRateRpm: null, flatTable: null, rateTolerancePct: null, depthM: null, resolutionWidthPx: null, resolutionHeightPx: null, nominalFrameRateFps: null, meterType: null };

/** A small invented lab for tests and the benchmark: two tables, two tanks, a camera and one person of each role. */
export async function seedRunLab() {
  const [tableA, tableB, tank, tank2, camera] = await Equipment.bulkCreate([
    { ...blank, kind: "table", name: "Bench table North", diameterM: 0.6, maxRateRpm: 30, flatTable: false, rateTolerancePct: 1 },
    { ...blank, kind: "table", name: "Bench table South", diameterM: 1.0, maxRateRpm: 20, flatTable: false, rateTolerancePct: 1 },
    { ...blank, kind: "tank", name: "Round tank 40", diameterM: 0.4, depthM: 0.2 },
    { ...blank, kind: "tank", name: "Round tank 57", diameterM: 0.57, depthM: 0.25 },
    { ...blank, kind: "camera", name: "Mast camera", resolutionWidthPx: 1280, resolutionHeightPx: 720, nominalFrameRateFps: 30 },
  ]);
  const person = async (role: Role, name: string) => {
    const u = await User.create({ email: `${role}.${Math.random().toString(36).slice(2, 8)}@tankside.example`, name, role, passwordHash: null, passwordChangedAt: null });
    return { id: u.id, email: u.email, name: u.name, role: u.role } satisfies CurrentUser;
  };
  const technician = await person("technician", "Ada Brightwater");
  const technician2 = await person("technician", "Bo Lindqvist");
  const instructor = await person("instructor", "Cleo Marsh");
  const manager = await person("lab_manager", "Dara Quist");
  return { tableA, tableB, tank, tank2, camera, technician, technician2, instructor, manager };
}
export type RunLab = Awaited<ReturnType<typeof seedRunLab>>;

/** The run log form's fields for a valid run on this lab's equipment. */
export function runInput(lab: RunLab, overrides: Record<string, unknown> = {}) {
  return {
    tableId: lab.tableA.id,
    tankId: lab.tank.id,
    cameraId: lab.camera.id,
    setRateRpm: 10,
    direction: "ccw" as const,
    waterDepthCm: 10,
    waterTemperatureC: 20,
    cameraMode: "rotating" as const,
    frameRateFps: 30,
    tracer: "float" as const,
    purpose: "Inertial circle demonstration",
    ...overrides,
  };
}
