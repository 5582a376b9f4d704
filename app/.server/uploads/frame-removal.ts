import { Op, type Transaction } from "sequelize";
import { Frame, Run, RunHistory, locking, sequelize } from "../db";
import { frameFileRunId, frameKey, frameThumbKey, store } from "../storage";
import { assertCanChange, RunError, setRunState } from "../runs/service";
import { inputsChanged } from "../runs/rechecks";
import type { CurrentUser } from "../auth/permissions";
import { renumber } from "./frames";

export interface RemovedFrames {
  /** How many frame rows went. */
  removed: number;
  /** How many files (images and thumbnails) went from storage: only those no frame row names any more. */
  filesRemoved: number;
  /** Frames the run has left. */
  frameCount: number;
}

/** Frame rows, of any run, that name this file (the owner's own frame, and corrections sharing it). */
function rowsNaming(frame: Frame, transaction: Transaction) {
  const owner = frameFileRunId(frame);
  return Frame.count({ where: { storedName: frame.storedName, [Op.or]: [{ fileRunId: owner }, { runId: owner, fileRunId: null }] }, transaction });
}

/**
 * Locks the rows of the runs whose folders hold these frames' files (other than runId, already
 * locked by the caller), by id: logging a correction takes the same locks in the same order, so it
 * never copies a reference to a file being removed.
 */
export async function lockFileOwners(runId: number, frames: Frame[], transaction: Transaction) {
  const owners = [...new Set(frames.map(frameFileRunId))].filter((id) => id !== runId).sort((a, b) => a - b);
  for (const id of owners) await Run.findByPk(id, { attributes: ["id"], ...locking(transaction) });
}

/** Of frames whose rows were just removed (in this transaction), those whose files no frame row of any run names any more. */
export async function filesNoLongerNamed(frames: Frame[], transaction: Transaction): Promise<Frame[]> {
  const unnamed: Frame[] = [];
  for (const f of frames) if ((await rowsNaming(f, transaction)) === 0) unnamed.push(f);
  return unnamed;
}

/** Removes the image and thumbnail of each frame from storage (after the commit); one that fails is left for the orphan sweep. */
export async function deleteFrameFiles(frames: Frame[]): Promise<number> {
  let filesRemoved = 0;
  const objects = store();
  for (const f of frames) {
    for (const key of [frameKey(f), frameThumbKey(f)]) {
      if (!key) continue;
      try {
        await objects.delete(key);
        filesRemoved++;
      } catch (err) {
        console.error(`[frames] ${key} not removed (the orphan sweep will):`, err);
      }
    }
  }
  return filesRemoved;
}

/**
 * Frames leave a run here, or through the frame viewer's removal (runs/frame-removal.ts), which
 * shares this module's locking and file rule: some of them (`frameIds`) or the whole stack ("all"). The rows go,
 * the rest are numbered 0…N−1 again, and a file is removed from storage only when no frame row of
 * any run names it any more: a correction shares the files of the run it corrects (Decision 53),
 * so removing the correction's frames, or the original's, leaves the other's frames whole.
 *
 * `user` is the person asking, held to the same rule as any change of the run (its technician or a
 * lab manager, never a signed-off run), checked under the run's row lock; null is Tankside itself
 * (removing a run's frames as part of removing the run), which skips that check.
 *
 * Locks: the run's row, then the rows of the runs whose folders hold the files, by id; logging a
 * correction takes the same locks, so it never copies a reference to a file being removed here.
 * Files go after the commit; one whose removal fails is left for the orphan sweep.
 */
export async function removeFrames(runId: number, frameIds: number[] | "all", user: CurrentUser | null): Promise<RemovedFrames> {
  const outcome = await sequelize.transaction(async (transaction) => {
    const run = await Run.findByPk(runId, locking(transaction));
    if (!run) throw new RunError("No such run.", 404, undefined, "not_found");
    if (user) assertCanChange(run, user);
    const wanted = frameIds === "all" ? null : [...new Set(frameIds)];
    const frames = await Frame.findAll({ where: wanted ? { runId, id: wanted } : { runId }, order: [["position", "ASC"]], transaction });
    if (wanted && frames.length !== wanted.length) {
      const found = new Set(frames.map((f) => f.id));
      const strangers = wanted.filter((id) => !found.has(id));
      throw new RunError(`No frame ${strangers.join(", ")} in this run; nothing was removed.`, 404, "frameIds", "not_found");
    }
    await lockFileOwners(runId, frames, transaction);

    if (frames.length) await Frame.destroy({ where: { id: frames.map((f) => f.id) }, transaction });
    const frameCount = await renumber(runId, transaction);
    await run.update({ frameCount, ...(frameCount === 0 ? { frameWidthPx: null, frameHeightPx: null } : {}) }, { transaction });
    if (frames.length) {
      await RunHistory.create(
        { runId, userId: user?.id ?? null, field: "frames", oldValue: String(frameCount + frames.length), newValue: String(frameCount) },
        { transaction },
      );
    }
    // No frames, nothing tracked or checked any more: back to a draft (a signed-off run keeps its state and verdict).
    if (frameCount === 0 && run.state !== "signed_off" && run.state !== "draft") {
      await setRunState(run, "draft", user?.id ?? null, transaction);
      await run.update({ verdict: null }, { transaction });
    }
    return { removed: frames.length, frameCount, unnamed: await filesNoLongerNamed(frames, transaction) };
  });

  const filesRemoved = await deleteFrameFiles(outcome.unnamed);
  // The tracks were made from the frames as they were: track again, and the check follows.
  if (outcome.removed && outcome.frameCount) await inputsChanged(runId, user?.id ?? null, "track");
  return { removed: outcome.removed, filesRemoved, frameCount: outcome.frameCount };
}
