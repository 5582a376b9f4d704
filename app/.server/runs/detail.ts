import { correctionOfSetup } from "~/lib/projective/stored-marks";
import { Equipment, Frame, Run, Track, User, ViewSetup } from "../db";
import { latestJob, serializeJob } from "../jobs/tracking-queue";
import { serializeEquipment } from "../equipment";
import { parseTrackPoints, storedCheck } from "./theory";
import { checkAwaited, currentCheck, type CurrentCheck } from "./current-check";
import { recheckPending } from "./rechecks";
import type { CurrentUser } from "../auth/permissions";
import { calibrationSnapshot, canChangeRun } from "./service";
import { frameFileStatus } from "./frame-files";
import { serializeRun } from "./serialize";
import { runLabel } from "~/lib/runs";

function sharedFilesOf(frames: { fileRunId: number | null }[]) {
  const counts = new Map<number, number>();
  for (const f of frames) if (f.fileRunId !== null) counts.set(f.fileRunId, (counts.get(f.fileRunId) ?? 0) + 1);
  return [...counts].map(([runId, count]) => ({ runId, label: runLabel(runId), count }));
}

/** Everything the run page shows, as plain data; the check is the current one only (see currentCheck). */
export async function runPageData(run: Run, user: CurrentUser, current?: CurrentCheck) {
  const [table, tank, camera, technician, frames, setup, job, tracks, judged] = await Promise.all([
    Equipment.findByPk(run.tableId),
    Equipment.findByPk(run.tankId),
    Equipment.findByPk(run.cameraId),
    User.findByPk(run.technicianId, { attributes: ["id", "name", "email"] }),
    Frame.findAll({
      where: { runId: run.id },
      attributes: ["id", "runId", "fileRunId", "position", "originalName", "timeS", "storedName", "thumbName"],
      order: [["position", "ASC"]],
    }),
    ViewSetup.findOne({ where: { runId: run.id } }),
    latestJob(run.id),
    Track.findAll({ where: { runId: run.id }, order: [["number", "ASC"]] }),
    current ?? currentCheck(run),
  ]);
  const active = job?.state === "queued" || job?.state === "running";
  const files = await frameFileStatus(frames);
  const missing = new Set(files.missing);
  const snapshot = calibrationSnapshot(run);
  return {
    run: {
      ...serializeRun(run),
      // The verdict column belongs to the check: while that is out of date no verdict is shown.
      verdict: judged.status === "current" ? run.verdict : null,
      frameWidthPx: run.frameWidthPx,
      frameHeightPx: run.frameHeightPx,
      calibrationsInForce: run.calibrationsInForce,
    },
    canChange: canChangeRun(run, user),
    table: table ? serializeEquipment(table) : null,
    tank: tank ? serializeEquipment(tank) : null,
    camera: camera ? serializeEquipment(camera) : null,
    technician: technician ? { id: technician.id, name: technician.name } : null,
    calibrations: snapshot,
    frames: frames.map((f) => ({ id: f.id, position: f.position, name: f.originalName, timeS: f.timeS, missing: missing.has(f.id) })),
    /** Runs whose stored files this run's frames share (a correction's frames are the corrected run's files), with how many. */
    sharedFiles: sharedFilesOf(frames),
    /** How many frames have lost their stored file, and whether the store could be asked at all. */
    frameFiles: { missing: files.missing.length, unavailable: files.unavailable },
    setup: setup
      ? {
          centre: { x: setup.centreXPx, y: setup.centreYPx },
          edge: setup.tankEdgeRPx ? { cx: setup.tankEdgeXPx, cy: setup.tankEdgeYPx, r: setup.tankEdgeRPx } : null,
          pxPerM: setup.scalePxPerM,
          mirrored: setup.mirrored,
          ...tiltOfSetup(setup),
        }
      : null,
    job: serializeJob(job),
    // Judged against the check this page shows, read with the rest of it: see checkAwaited.
    checkAwaited: await checkAwaited(run, job, new Date(), judged.latest),
    tracks: tracks.map((t) => ({
      id: t.id,
      number: t.number,
      points: t.pointCount,
      detectedShare: t.detectedShare,
      jitterPx: t.jitterPx,
      duration: (() => {
        const p = parseTrackPoints(t);
        return p.length ? p[p.length - 1]!.t - p[0]!.t : 0;
      })(),
    })),
    check: judged.check ? storedCheck(judged.check) : null,
    checkStatus: judged.status,
    checkOutOfDate: judged.status === "out_of_date" ? { because: judged.changed, recheckPending: recheckPending(run.id) || active } : null,
  };
}
export type RunPageData = Awaited<ReturnType<typeof runPageData>>;

/** A camera not quite overhead: the correction the check applies (Decision 69), its summary, or why the stored marks give none. */
function tiltOfSetup(setup: ViewSetup) {
  const { correction, error } = correctionOfSetup(setup);
  return { correction: correction?.homography ?? null, tilt: correction?.summary ?? null, tiltError: error };
}
