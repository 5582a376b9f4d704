import { Op, type Transaction } from "sequelize";
import { Frame, Run, RunHistory, ViewSetup, locking } from "../db";
import { frameFileRunId } from "../storage";
import { runLabel } from "~/lib/runs";
import { RunError, setRunState } from "./service";

/**
 * What a correction starts with from the run it corrects (Decision 53): its frames, as rows that
 * name the same stored files (never copies of them), its view setup (a row of its own, changed on
 * the new run as usual) and its rate reached time (taken by createRun when none is given).
 */
export interface CarryOverSummary {
  frames: number;
  viewSetup: boolean;
  rateReachedAt: string | null;
}

/** What a correction of this run would start with, for the form that logs it. */
export async function carryOverSummary(run: Run): Promise<CarryOverSummary> {
  const [frames, setup] = await Promise.all([Frame.count({ where: { runId: run.id } }), ViewSetup.count({ where: { runId: run.id } })]);
  return { frames, viewSetup: setup > 0, rateReachedAt: run.rateReachedAt?.toISOString() ?? null };
}

/**
 * The run a new correction corrects, locked for the rest of the transaction: it must exist and be
 * signed off (an open run is changed, not corrected). Then the rows of the runs whose folders hold
 * its frames' files, by id, as removeFrames takes them, so no file is removed while its reference
 * is being copied.
 */
export async function lockCorrected(id: number, transaction: Transaction) {
  const old = await Run.findByPk(id, locking(transaction));
  if (!old) throw new RunError("The run this corrects does not exist.", 404, "supersedesId", "not_found");
  if (old.state !== "signed_off") {
    throw new RunError(
      `${runLabel(old.id)} is not signed off: change it instead of logging a correction (a correction follows a signed-off run).`,
      409,
      "supersedesId",
      "not_signed_off",
    );
  }
  const shared = await Frame.findAll({ where: { runId: old.id, fileRunId: { [Op.ne]: null } }, attributes: ["runId", "fileRunId"], transaction });
  const ids = [...new Set(shared.map(frameFileRunId))].filter((o) => o !== old.id).sort((a, b) => a - b);
  for (const o of ids) await Run.findByPk(o, { attributes: ["id"], ...locking(transaction) });
  return old;
}

/**
 * Gives the new correction `run` the frames (unless left out) and the view setup of `old`, inside
 * the transaction that logs it. The frame rows keep the originals' positions, times and arrival
 * times (so "rate reached before the first frame" still means the filming) and name the file's
 * owner run: the original's own folder, also for a correction of a correction.
 */
export async function carryOver(old: Run, run: Run, opts: { frames: boolean; userId: number }, transaction: Transaction) {
  let frames = 0;
  if (opts.frames) {
    const source = await Frame.findAll({ where: { runId: old.id }, order: [["position", "ASC"]], transaction });
    if (source.length) {
      await Frame.bulkCreate(
        source.map((f) => ({
          runId: run.id,
          fileRunId: frameFileRunId(f),
          position: f.position,
          originalName: f.originalName,
          storedName: f.storedName,
          thumbName: f.thumbName,
          sha256: f.sha256,
          format: f.format,
          widthPx: f.widthPx,
          heightPx: f.heightPx,
          sizeBytes: f.sizeBytes,
          timeS: f.timeS,
          createdAt: f.createdAt,
        })),
        { transaction },
      );
      frames = source.length;
      await run.update({ frameCount: frames, frameWidthPx: old.frameWidthPx, frameHeightPx: old.frameHeightPx }, { transaction });
      await RunHistory.create(
        { runId: run.id, userId: opts.userId, field: "frames", oldValue: null, newValue: `${frames} shared with ${runLabel(old.id)}` },
        { transaction },
      );
      await setRunState(run, "frames_in", opts.userId, transaction);
    }
  }
  const setup = await ViewSetup.findOne({ where: { runId: old.id }, transaction });
  if (setup) {
    // The marks as they were, on the new run's camera (a correction may put right which camera it was).
    await ViewSetup.create(
      {
        runId: run.id,
        cameraId: run.cameraId,
        centreXPx: setup.centreXPx,
        centreYPx: setup.centreYPx,
        tankEdgeXPx: setup.tankEdgeXPx,
        tankEdgeYPx: setup.tankEdgeYPx,
        tankEdgeRPx: setup.tankEdgeRPx,
        scalePxPerM: setup.scalePxPerM,
        scalePoints: setup.scalePoints,
        mirrored: setup.mirrored,
        createdById: setup.createdById,
      },
      { transaction },
    );
    await RunHistory.create(
      { runId: run.id, userId: opts.userId, field: "viewSetup", oldValue: null, newValue: `copied from ${runLabel(old.id)}` },
      { transaction },
    );
  }
  return { frames, viewSetup: setup !== null };
}
