import { Run, ViewSetup, locking, sequelize } from "../db";
import { inputsChanged } from "./rechecks";
import type { ViewSetupInput } from "~/lib/validation/view-setup";
import { parseKnownPoints, parseRimPoints } from "~/lib/projective/stored-marks";

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

/** Tilt marks as stored: the points read back (so the column holds nothing else), or null for none. */
const storedList = (points: readonly object[] | null): string | null => (points?.length ? JSON.stringify(points) : null);

/**
 * What the frame itself refuses in a setup that passed its schema: marks outside the run's frame,
 * by field (the form's names), empty when there is nothing to say.
 */
export function marksOutsideFrame(run: Run, v: ViewSetupInput): Record<string, string[]> {
  const w = run.frameWidthPx ?? 0;
  const h = run.frameHeightPx ?? 0;
  const errors: Record<string, string[]> = {};
  if (v.centreX < 0 || v.centreX > w || v.centreY < 0 || v.centreY > h) errors.centreX = [`The centre must lie inside the ${w} × ${h} px frame.`];
  if (v.edgeX !== undefined && v.edgeY !== undefined && (v.edgeX < 0 || v.edgeX > w || v.edgeY < 0 || v.edgeY > h)) {
    errors.edgeX = [`The tank edge's centre must lie inside the ${w} × ${h} px frame.`];
  }
  if (v.rateMarkX !== undefined && v.rateMarkY !== undefined && (v.rateMarkX < 0 || v.rateMarkX > w || v.rateMarkY < 0 || v.rateMarkY > h)) {
    errors.rateMarkX = [`The mark on the table must lie inside the ${w} × ${h} px frame.`];
  }
  return errors;
}

/** The row a checked setup is saved as. */
export function setupRowOf(run: Run, v: ViewSetupInput, userId: number): ViewSetupValues {
  return {
    runId: run.id,
    cameraId: run.cameraId,
    centreXPx: v.centreX,
    centreYPx: v.centreY,
    tankEdgeXPx: v.edgeX ?? null,
    tankEdgeYPx: v.edgeY ?? null,
    tankEdgeRPx: v.edgeR ?? null,
    scalePxPerM: v.scaleLengthPx && v.scaleLengthCm ? v.scaleLengthPx / (v.scaleLengthCm / 100) : null,
    scalePoints: v.scalePoints || null,
    mirrored: v.mirrored,
    rateMarkXPx: v.rateMarkX ?? null,
    rateMarkYPx: v.rateMarkY ?? null,
    rimPoints: storedList(v.rimPoints === undefined ? null : parseRimPoints(v.rimPoints)),
    knownPoints: storedList(v.knownPoints === undefined ? null : parseKnownPoints(v.knownPoints)),
    createdById: userId,
  };
}
