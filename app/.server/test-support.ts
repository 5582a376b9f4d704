import { Equipment, User, migrate } from "./db";
import type { CurrentUser } from "./auth/permissions";
import { sessionStorage } from "./auth/session";
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

/** The session cookie of a signed-in person, as their browser would send it. */
export async function sessionCookie(userId: number): Promise<string> {
  const session = await sessionStorage.getSession();
  session.set("userId", userId);
  return (await sessionStorage.commitSession(session)).split(";")[0] ?? "";
}

type PageAction = (args: { request: Request; params: Record<string, string>; context: unknown }) => unknown;

/**
 * A page's form posted by a signed-in person, straight to the route's action: its status and the
 * data it answered with (`data(…, { status })` carries the status in `init`; a plain object is a 200).
 */
export async function postPageForm<T = { notice?: string; problem?: string }>(
  action: PageAction,
  path: string,
  who: Pick<CurrentUser, "id">,
  fields: Record<string, string>,
  params: Record<string, string> = {},
): Promise<{ status: number; body: T }> {
  const request = new Request(`http://localhost${path}`, {
    method: "POST",
    headers: { Cookie: await sessionCookie(who.id) },
    body: new URLSearchParams(fields),
  });
  const result = await action({ request, params, context: {} });
  if (result && typeof result === "object" && "init" in result && "data" in result) {
    const r = result as { init: ResponseInit | null; data: T };
    return { status: r.init?.status ?? 200, body: r.data };
  }
  return { status: 200, body: result as T };
}
