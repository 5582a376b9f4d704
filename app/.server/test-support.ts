import { Equipment, User, migrate } from "./db";
import type { CurrentUser } from "./auth/permissions";
import type { RunInput } from "~/lib/validation/run";

/** Test fixtures shared by the server tests: a migrated database with a small lab in it. */
export async function smallLab() {
  await migrate();
  const stamp = Math.random().toString(36).slice(2, 8);
  const mk = async (role: CurrentUser["role"], name: string) => {
    const u = await User.create({
      email: `${name.toLowerCase().replace(/ /g, "-")}-${stamp}@tankside.example`,
      name,
      role,
      passwordHash: null,
      passwordChangedAt: null,
    });
    return { id: u.id, email: u.email, name: u.name, role: u.role } satisfies CurrentUser;
  };
  const tech = await mk("technician", "Test Technician");
  const otherTech = await mk("technician", "Other Technician");
  const manager = await mk("lab_manager", "Test Manager");
  const instructor = await mk("instructor", "Test Instructor");
  const table = await Equipment.create({
    kind: "table",
    name: `Table ${stamp}`,
    diameterM: 0.6,
    maxRateRpm: 30,
    flatTable: false,
    rateTolerancePct: 1,
  } as never);
  const tank = await Equipment.create({ kind: "tank", name: `Tank ${stamp}`, diameterM: 0.5, depthM: 0.2 } as never);
  const camera = await Equipment.create({
    kind: "camera",
    name: `Camera ${stamp}`,
    resolutionWidthPx: 320,
    resolutionHeightPx: 240,
    nominalFrameRateFps: 30,
  } as never);
  const retiredCamera = await Equipment.create({
    kind: "camera",
    name: `Old camera ${stamp}`,
    status: "retired",
    resolutionWidthPx: 320,
    resolutionHeightPx: 240,
    nominalFrameRateFps: 30,
  } as never);
  const runInput = (over: Partial<RunInput> = {}): RunInput => ({
    tableId: table.id,
    tankId: tank.id,
    cameraId: camera.id,
    setRateRpm: 10,
    direction: "ccw",
    waterDepthCm: 10,
    waterTemperatureC: 20,
    rateReachedAt: undefined,
    cameraMode: "rotating",
    frameRateFps: 30,
    tracer: "float",
    purpose: "Test run",
    notes: undefined,
    supersedesId: undefined,
    ...over,
  });
  return { tech, otherTech, manager, instructor, table, tank, camera, retiredCamera, runInput };
}
