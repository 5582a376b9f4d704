import { Op, type Transaction } from "sequelize";
import { Run, ViewSetup, locking, sequelize } from "../db";

/**
 * A view setup carried over from the camera's last run (Decision 67). A camera on its bracket sees
 * the tank in the same place run after run, so a run with no setup may start from the last one made
 * with that camera, on frames of the same size (another size means another mode or crop). On the
 * setup page that is a starting point to adjust; on the run page it is an opt-in of the upload, so
 * that frames can be searched as they land.
 */
export async function lastSetupOfCamera(cameraId: number, size: { width: number; height: number } | null, exceptRunId?: number, transaction?: Transaction) {
  const recent = await ViewSetup.findAll({
    transaction,
    where: exceptRunId === undefined ? { cameraId } : { cameraId, runId: { [Op.ne]: exceptRunId } },
    order: [
      ["updatedAt", "DESC"],
      ["id", "DESC"],
    ],
    limit: 10,
  });
  const runs = await Run.findAll({ where: { id: recent.map((s) => s.runId) }, attributes: ["id", "frameWidthPx", "frameHeightPx"], transaction });
  const sizeOf = new Map(runs.map((r) => [r.id, r.frameWidthPx && r.frameHeightPx ? { width: r.frameWidthPx, height: r.frameHeightPx } : null]));
  for (const setup of recent) {
    const made = sizeOf.get(setup.runId);
    if (!made) continue;
    if (!size || (made.width === size.width && made.height === size.height)) return { setup, size: made };
  }
  return null;
}

export interface CarryOverOffer {
  fromRunId: number;
  width: number;
  height: number;
}

/** What the run page offers to carry over: nothing when the run has its own setup; else the camera's last setup (of the run's frame size, once it has frames). */
export async function carryOverOffer(run: Run): Promise<CarryOverOffer | null> {
  if (await ViewSetup.count({ where: { runId: run.id } })) return null;
  const size = run.frameWidthPx && run.frameHeightPx ? { width: run.frameWidthPx, height: run.frameHeightPx } : null;
  const last = await lastSetupOfCamera(run.cameraId, size, run.id);
  return last ? { fromRunId: last.setup.runId, ...last.size } : null;
}

export type CarryOverOutcome = { carried: true; fromRunId: number } | { carried: false; message: string; alreadySet?: boolean };

const keptOwn: CarryOverOutcome = { carried: false, alreadySet: true, message: "The run already has a view setup; it is kept." };

/**
 * After a frame was accepted on an upload that opted in: gives a run without a view setup a copy
 * of the camera's last setup made on frames of this run's size. A run that has a setup keeps it
 * (the first of several uploads at once makes the copy, behind the run's row lock; the others find
 * it). The copy is the run's own from then on: changing it later is an ordinary setup change.
 */
export async function carrySetupOver(runId: number, userId: number): Promise<CarryOverOutcome> {
  // Every still of a streamed upload opts in; once the first has made the copy the rest must not
  // queue on the run's lock only to find it. A setup, once there, stays for the upload's length.
  if (await ViewSetup.count({ where: { runId } })) return keptOwn;
  return sequelize.transaction(async (transaction) => {
    const run = await Run.findByPk(runId, locking(transaction));
    if (!run) return { carried: false, message: "The run was deleted." };
    const own = await ViewSetup.findOne({ where: { runId }, transaction });
    if (own) return keptOwn;
    if (!run.frameWidthPx || !run.frameHeightPx) return { carried: false, message: "The run has no frames yet, so its frame size is not known." };
    const last = await lastSetupOfCamera(run.cameraId, { width: run.frameWidthPx, height: run.frameHeightPx }, run.id, transaction);
    if (!last)
      return {
        carried: false,
        message: `No earlier run of this camera has a view setup made on ${run.frameWidthPx} × ${run.frameHeightPx} px frames; set up the view on this run's frames.`,
      };
    const s = last.setup;
    await ViewSetup.create(
      {
        runId,
        cameraId: run.cameraId,
        centreXPx: s.centreXPx,
        centreYPx: s.centreYPx,
        tankEdgeXPx: s.tankEdgeXPx,
        tankEdgeYPx: s.tankEdgeYPx,
        tankEdgeRPx: s.tankEdgeRPx,
        scalePxPerM: s.scalePxPerM,
        scalePoints: s.scalePoints,
        mirrored: s.mirrored,
        rateMarkXPx: s.rateMarkXPx,
        rateMarkYPx: s.rateMarkYPx,
        // The camera's lean goes with its mount, so the tilt marks come over with the rest.
        rimPoints: s.rimPoints,
        knownPoints: s.knownPoints,
        createdById: userId,
      },
      { transaction },
    );
    return { carried: true, fromRunId: s.runId };
  });
}
