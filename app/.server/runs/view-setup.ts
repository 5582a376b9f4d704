import { Run, ViewSetup, locking, sequelize } from "../db";
import { inputsChanged } from "./rechecks";

type SetupRow = ViewSetup["_creationAttributes"];
/** The mark on the table (migration 0013) and the tilt marks (0016) may be left out: an existing setup then keeps its own. */
export type ViewSetupValues = Omit<SetupRow, "id" | "createdAt" | "updatedAt" | "rateMarkXPx" | "rateMarkYPx" | "rimPoints" | "knownPoints"> &
  Partial<Pick<SetupRow, "rateMarkXPx" | "rateMarkYPx" | "rimPoints" | "knownPoints">>;

/**
 * Saves the run's view setup (one per run, a unique index); a changed setup makes the check out of
 * date and re-tracks the run. Saves of one run take turns behind the run's row lock, so the second
 * of two at once finds the first one's row and updates it, and "changed" compares with what the
 * previous save left.
 */
export async function saveViewSetup(run: Run, values: ViewSetupValues, userId: number) {
  const changed = await sequelize.transaction(async (transaction) => {
    await Run.findByPk(run.id, locking(transaction));
    const existing = await ViewSetup.findOne({ where: { runId: run.id }, transaction });
    if (!existing) {
      await ViewSetup.create(values, { transaction });
      return false;
    }
    existing.set(values);
    const fields = (existing.changed() || []).filter((k) => k !== "createdById" && k !== "updatedAt");
    await existing.save({ transaction });
    return fields.length > 0;
  });
  // The tracks were made with the old marks: track again, and the check follows the new tracks.
  if (changed) await inputsChanged(run.id, userId, "track");
}
