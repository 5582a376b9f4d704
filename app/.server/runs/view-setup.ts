import { ViewSetup, type Run } from "../db";
import { inputsChanged } from "./rechecks";

export type ViewSetupValues = Omit<ViewSetup["_creationAttributes"], "id" | "createdAt" | "updatedAt">;

/** Saves the run's view setup; a changed setup makes the check out of date and re-tracks the run. */
export async function saveViewSetup(run: Run, values: ViewSetupValues, userId: number) {
  const existing = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!existing) {
    await ViewSetup.create(values);
    return;
  }
  existing.set(values);
  const changed = (existing.changed() || []).filter((k) => k !== "createdById" && k !== "updatedAt");
  await existing.save();
  // The tracks were made with the old marks: track again, and the check follows the new tracks.
  if (changed.length) await inputsChanged(run.id, userId, "track");
}
