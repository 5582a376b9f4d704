import { Op } from "sequelize";
import { Frame, Run, RunHistory, TheoryCheck, TrackingJob, ViewSetup, locking, sequelize } from "../db";
import { deleteFrameFiles, filesNoLongerNamed, lockFileOwners } from "../uploads/frame-removal";
import type { CurrentUser } from "../auth/permissions";
import { assertCanChange, RunError, setRunState } from "./service";
import { scheduleRecheck } from "./rechecks";
import type { FrameSelection } from "~/lib/validation/frame-removal";

/**
 * Removing frames from a run's stack before sign-off: one frame, a range, or the whole stack. The
 * rows go in one transaction holding the run's lock (so a sign-off or an upload waits), the frames
 * after them move up, and the run's history says which went; the files are removed from storage
 * once that has committed (a file left behind by a failed removal names no frame and is swept at
 * the next start). The tracks and the check were made from the old stack, so provenance makes them
 * out of date at once, and a run that had been tracked is tracked again, which ends in a new check.
 * Nothing else changes: the view setup, the conditions and the earlier checks stay.
 */

export interface FrameRemovalResult {
  removed: { id: number; position: number; name: string }[];
  frameCount: number;
  /** Tracking was queued again (the run had been tracked, and enough frames and a view setup remain). */
  retracking: boolean;
}

const activeJob = (runId: number, transaction?: import("sequelize").Transaction) =>
  TrackingJob.findOne({ where: { runId, state: { [Op.in]: ["queued", "running"] } }, attributes: ["id"], transaction });

const trackingBusy = () =>
  new RunError("Tracking is working on these frames now. Wait until it has finished (or cancel it), then remove frames.", 409, undefined, "job_active");

/** Throws RunError: 404 no run, 403 not the run's technician or a lab manager, 409 signed off, tracking busy or a changed stack, 400 a range off the stack. */
export async function removeFrameSelection(
  runId: number,
  user: CurrentUser,
  selection: FrameSelection,
  seen?: { frameCount?: number },
): Promise<FrameRemovalResult> {
  const run = await Run.findByPk(runId);
  if (!run) throw new RunError("No such run.", 404, undefined, "not_found");
  assertCanChange(run, user);

  const outcome = await sequelize.transaction(async (transaction) => {
    // Checked again holding the run's lock: a sign-off, an upload or a tracking job may have come first.
    await run.reload(locking(transaction));
    assertCanChange(run, user);
    if (await activeJob(run.id, transaction)) throw trackingBusy();
    const frames = await Frame.findAll({
      where: { runId: run.id },
      attributes: ["id", "runId", "fileRunId", "position", "originalName", "storedName", "thumbName", "timeS"],
      order: [["position", "ASC"]],
      transaction,
    });
    if (!frames.length) throw new RunError("This run has no frames to remove.", 409, undefined, "no_frames");
    if (seen?.frameCount !== undefined && seen.frameCount !== frames.length) {
      throw new RunError(
        `The stack has changed since you looked at it: it has ${frames.length} frames, not ${seen.frameCount}. Look at the frames again and choose once more.`,
        409,
        undefined,
        "stack_changed",
      );
    }
    const from = "all" in selection ? 0 : selection.from;
    const to = "all" in selection ? frames.length - 1 : selection.to;
    if (to >= frames.length) {
      throw new RunError(`The stack has ${frames.length} frames; the range reaches past its last frame.`, 400, "to", "out_of_range");
    }
    const gone = frames.slice(from, to + 1);
    const kept = frames.filter((f) => f.position < from || f.position > to);
    // A correction may share these files with the run it corrects (Decision 53): lock their owners as removeFrames does.
    await lockFileOwners(run.id, gone, transaction);
    await Frame.destroy({ where: { id: { [Op.in]: gone.map((f) => f.id) } }, transaction });
    // Stills without times of their own are spaced by the frame rate from their position: each
    // keeps the time it had, so a removed frame leaves a gap in time instead of pulling every later
    // frame one frame interval earlier.
    const timed = frames.every((f) => f.timeS !== null && Number.isFinite(f.timeS));
    // The frames after the gap move up: positions stay 0 … N − 1 in the order they had.
    for (let i = 0; i < kept.length; i++) {
      const f = kept[i]!;
      const values = { ...(f.position !== i ? { position: i } : {}), ...(timed ? {} : { timeS: f.position / run.frameRateFps }) };
      if (Object.keys(values).length) await Frame.update(values, { where: { id: f.id }, transaction });
    }
    const which = kept.length === 0 ? "the whole stack" : gone.length === 1 ? `frame ${from + 1} (${gone[0]!.originalName})` : `frames ${from + 1}–${to + 1}`;
    await RunHistory.create(
      { runId: run.id, userId: user.id, field: "frames", oldValue: `${frames.length} frames`, newValue: `${kept.length} frames (removed ${which})` },
      { transaction },
    );
    // The runs table's verdict belongs to the old stack; a stack emptied may next come in another size.
    await run.update({ frameCount: kept.length, verdict: null, ...(kept.length ? {} : { frameWidthPx: null, frameHeightPx: null }) }, { transaction });
    if (!kept.length) await setRunState(run, "draft", user.id, transaction);
    return { gone, kept: kept.length, unnamed: await filesNoLongerNamed(gone, transaction) };
  });

  // Only files no frame row of any run names any more: a correction's frames may be another run's files.
  await deleteFrameFiles(outcome.unnamed);

  // Tracked before: track again, which ends in a new check. Never tracked: the technician tracks it when ready.
  const [setup, tracked, checked] = await Promise.all([
    ViewSetup.count({ where: { runId: run.id } }),
    TrackingJob.count({ where: { runId: run.id, state: "done" } }),
    TheoryCheck.count({ where: { runId: run.id } }),
  ]);
  const retracking = outcome.kept >= 3 && setup > 0 && tracked + checked > 0;
  if (retracking) scheduleRecheck(run.id, user.id, "track");
  return {
    removed: outcome.gone.map((f) => ({ id: f.id, position: f.position, name: f.originalName })),
    frameCount: outcome.kept,
    retracking,
  };
}
