import { Equipment, Frame, Run, Track, User, ViewSetup } from "../db";
import { latestJob, serializeJob } from "../jobs/tracking-queue";
import { serializeEquipment } from "../equipment";
import { latestCheck, parseTrackPoints } from "./theory";
import type { CurrentUser } from "../auth/permissions";
import { calibrationSnapshot, canChangeRun } from "./service";

/** Everything the run page shows, as plain data. */
export async function runPageData(run: Run, user: CurrentUser) {
  const [table, tank, camera, technician, frames, setup, job, tracks, check] = await Promise.all([
    Equipment.findByPk(run.tableId),
    Equipment.findByPk(run.tankId),
    Equipment.findByPk(run.cameraId),
    User.findByPk(run.technicianId, { attributes: ["id", "name", "email"] }),
    Frame.findAll({ where: { runId: run.id }, attributes: ["id", "position", "originalName", "timeS"], order: [["position", "ASC"]] }),
    ViewSetup.findOne({ where: { runId: run.id } }),
    latestJob(run.id),
    Track.findAll({ where: { runId: run.id }, order: [["number", "ASC"]] }),
    latestCheck(run.id),
  ]);
  const snapshot = calibrationSnapshot(run);
  return {
    run: {
      ...run.get({ plain: true }),
      rateReachedAt: run.rateReachedAt?.toISOString() ?? null,
      signedOffAt: run.signedOffAt?.toISOString() ?? null,
      createdAt: run.createdAt.toISOString(),
      updatedAt: run.updatedAt.toISOString(),
    },
    canChange: canChangeRun(run, user),
    table: table ? serializeEquipment(table) : null,
    tank: tank ? serializeEquipment(tank) : null,
    camera: camera ? serializeEquipment(camera) : null,
    technician: technician ? { id: technician.id, name: technician.name } : null,
    calibrations: snapshot,
    frames: frames.map((f) => ({ id: f.id, position: f.position, name: f.originalName, timeS: f.timeS })),
    setup: setup
      ? {
          centre: { x: setup.centreXPx, y: setup.centreYPx },
          edge: setup.tankEdgeRPx ? { cx: setup.tankEdgeXPx, cy: setup.tankEdgeYPx, r: setup.tankEdgeRPx } : null,
          pxPerM: setup.scalePxPerM,
          mirrored: setup.mirrored,
        }
      : null,
    job: serializeJob(job),
    tracks: tracks.map((t) => ({
      id: t.id,
      number: t.number,
      points: t.pointCount,
      detectedShare: t.detectedShare,
      jitterPx: t.jitterPx,
      duration: (() => {
        const p = parseTrackPoints(t);
        return p.length ? p[p.length - 1].t - p[0].t : 0;
      })(),
    })),
    check,
  };
}
export type RunPageData = Awaited<ReturnType<typeof runPageData>>;
