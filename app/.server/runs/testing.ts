import { Equipment, Run, Track, TrackingJob, User, ViewSetup } from "../db";
import { createRun } from "./service";
import { checkRun } from "./theory";
import { omegaFromTableRate } from "~/lib/analysis/run-omega";
import { trackingFingerprint } from "./provenance";
import type { CurrentUser } from "../auth/permissions";
import type { Role } from "~/lib/roles";

/** A small invented lab for tests and the benchmark: two tables, two tanks, a camera and one person of each role. */
export async function seedRunLab() {
  const [tableA, tableB, tank, tank2, camera] = await Equipment.bulkCreate([
    { kind: "table", name: "Bench table North", diameterM: 0.6, maxRateRpm: 30, flatTable: false, rateTolerancePct: 1 },
    { kind: "table", name: "Bench table South", diameterM: 1.0, maxRateRpm: 20, flatTable: false, rateTolerancePct: 1 },
    { kind: "tank", name: "Round tank 40", diameterM: 0.4, depthM: 0.2 },
    { kind: "tank", name: "Round tank 57", diameterM: 0.57, depthM: 0.25 },
    { kind: "camera", name: "Mast camera", resolutionWidthPx: 1280, resolutionHeightPx: 720, nominalFrameRateFps: 30 },
  ]);
  if (!tableA || !tableB || !tank || !tank2 || !camera) throw new Error("bulkCreate returned fewer rows than it was given");
  const person = async (role: Role, name: string) => {
    const u = await User.create({
      email: `${role}.${Math.random().toString(36).slice(2, 8)}@tankside.example`,
      name,
      role,
      passwordHash: null,
      passwordChangedAt: null,
    });
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

/**
 * A saved view setup for a run: the rotation centre, a scale and no tank edge, as a technician
 * would mark it. Create it before the tracking job, so the job's tracks count as made from it.
 */
export async function plainViewSetup(
  run: Run,
  createdById: number,
  { centre = { x: 640, y: 360 }, pxPerM = 1000 }: { centre?: { x: number; y: number }; pxPerM?: number | null } = {},
) {
  return ViewSetup.create({
    runId: run.id,
    cameraId: run.cameraId,
    centreXPx: centre.x,
    centreYPx: centre.y,
    tankEdgeXPx: null,
    tankEdgeYPx: null,
    tankEdgeRPx: null,
    scalePxPerM: pxPerM,
    scalePoints: null,
    mirrored: false,
    createdById,
  });
}

/**
 * A finished tracking job for the run as it is now (frames, view setup, tracer, frame rate), as the
 * queue records it: tracks made under it count as made from the run's present inputs. Create the
 * view setup and frames first.
 */
export async function doneTrackingJob(run: Run, requestedById: number, frames = 0) {
  return TrackingJob.create({
    runId: run.id,
    requestedById,
    state: "done",
    framesTotal: frames,
    framesDone: frames,
    error: null,
    startedAt: new Date(),
    finishedAt: new Date(),
    inputFingerprint: await trackingFingerprint(run),
  });
}

/**
 * A run tracked and checked through checkRun: a float on the inertial circle of a table truly
 * turning at `trueRpm` (the set rate unless given), seen by a co-rotating camera at 30 frames/s.
 */
export async function checkedRunFor(lab: RunLab, user: CurrentUser, overrides: Record<string, unknown> = {}, trueRpm?: number) {
  const run = await createRun(runInput(lab, overrides), user);
  const centre = { x: 640, y: 360 };
  const pxPerM = 1000;
  await plainViewSetup(run, user.id, { centre, pxPerM });
  const job = await doneTrackingJob(run, user.id, 180);
  const f = 2 * omegaFromTableRate(trueRpm ?? run.setRateRpm, run.direction);
  const points = Array.from({ length: 180 }, (_, i) => {
    const t = i / 30;
    return [t, centre.x + (0.02 + 0.07 * Math.cos(-f * t)) * pxPerM, centre.y - 0.07 * Math.sin(-f * t) * pxPerM, i];
  });
  await Track.create({ runId: run.id, jobId: job.id, number: 1, points: JSON.stringify(points), pointCount: points.length, detectedShare: 1, jitterPx: 0 });
  await run.update({ state: "tracked" });
  const check = await checkRun(run.id, user.id);
  if (!check) throw new Error("the fixture's run could not be checked");
  return { run: (await Run.findByPk(run.id))!, check };
}
