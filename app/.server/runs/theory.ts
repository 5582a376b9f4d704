import { Equipment, Run, TheoryCheck, Track, ViewSetup, locking, sequelize } from "../db";
import { calibrationsForCheck } from "./applied-calibrations";
import { getLabSettings } from "../settings";
import { codeVersion } from "../version";
import { runTheoryCheck, type TheoryCheckInput, type TheoryCheckResult } from "~/lib/analysis/check";
import { runOmega } from "~/lib/analysis/run-omega";
import { setRunState } from "./service";
import { checkHistoryValues, presentFingerprint } from "./provenance";
import { latestCheck } from "./current-check";
import { RunHistory } from "../db";

// The rate lookup lives with the other calibrations the check applies.
export { rateInForce, type RateInForce } from "./applied-calibrations";

export function parseTrackPoints(track: Track) {
  return (JSON.parse(track.points) as [number, number, number, number][]).map(([t, x, y, frameIndex]) => ({ t, x, y, frameIndex }));
}

/** Builds the theory-check input for a run's longest track: the same function the CLI and the browser call. */
export async function theoryInputFor(run: Run): Promise<{ input: TheoryCheckInput; track: Track } | null> {
  const tracks = await Track.findAll({
    where: { runId: run.id },
    order: [
      ["pointCount", "DESC"],
      ["id", "ASC"],
    ],
    limit: 1,
  });
  const setup = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!tracks.length || !setup) return null;
  const table = await Equipment.findByPk(run.tableId);
  const settings = await getLabSettings();
  // Rate, timing and scale calibrations frozen on the run: what each changes, and the words saying so.
  const applied = await calibrationsForCheck(run, setup.scalePxPerM);
  const input: TheoryCheckInput = {
    points: parseTrackPoints(tracks[0]!),
    setup: {
      centre: { x: setup.centreXPx, y: setup.centreYPx },
      pxPerM: applied.pxPerM,
      mirrored: setup.mirrored,
    },
    omegaSet: runOmega(run),
    omegaCalibrated: applied.omegaCalibrated,
    frameTimes: applied.frameTimes,
    calibrationsApplied: applied.calibrationsApplied,
    cameraMode: run.cameraMode,
    t0: 0,
    flatTable: Boolean(table?.flatTable),
    settings: { tolerance: settings.checkTolerancePct / 100 },
  };
  return { input, track: tracks[0]! };
}

export interface StoredCheck {
  id: number;
  result: TheoryCheckResult;
  input: Omit<TheoryCheckInput, "points"> & { trackId: number; pointCount: number };
  codeVersion: string;
  createdAt: string;
}

/**
 * Runs the theory check on the run's longest track and stores it with what is needed to reproduce
 * it, and the fingerprint of its inputs (see ./provenance). A signed-off run's check never changes;
 * tracks made from other frames or another view setup than the present ones are not fitted.
 */
export async function checkRun(runId: number, userId: number | null) {
  const run = await Run.findByPk(runId);
  if (!run || run.state === "signed_off") return null;
  const prepared = await theoryInputFor(run);
  if (!prepared) return null;
  const { fingerprint, inputs } = await presentFingerprint(run, prepared.track);
  if (!fingerprint) return null;
  const result = runTheoryCheck(prepared.input);
  const { points, ...rest } = prepared.input;
  const stored = { result, input: { ...rest, trackId: prepared.track.id, pointCount: points.length }, provenance: { fingerprint, inputs } };
  const previous = await latestCheck(runId);
  return sequelize.transaction(async (transaction) => {
    // Read again holding the run's lock: a sign-off may have committed while the fit ran, and a signed run keeps its check.
    await run.reload(locking(transaction));
    if (run.state === "signed_off") return null;
    const check = await TheoryCheck.create(
      {
        runId,
        trackId: prepared.track.id,
        verdict: result.verdict,
        fMeasuredPerS: result.fMeasured,
        fPredictedPerS: result.fPredicted,
        result: JSON.stringify(stored),
        codeVersion,
        createdById: userId,
        inputFingerprint: fingerprint,
      },
      { transaction },
    );
    await run.update({ verdict: result.verdict }, { transaction });
    await RunHistory.create({ runId, userId, field: "theoryCheck", ...checkHistoryValues(previous, check, inputs) }, { transaction });
    if (run.state === "tracked") await setRunState(run, "checked", userId, transaction);
    return check;
  });
}

/** A stored check row as the run page reads it; which row is current is currentCheck's to say. */
export function storedCheck(row: TheoryCheck): StoredCheck {
  const parsed = JSON.parse(row.result) as Pick<StoredCheck, "result" | "input">;
  return { id: row.id, result: parsed.result, input: parsed.input, codeVersion: row.codeVersion, createdAt: row.createdAt.toISOString() };
}
