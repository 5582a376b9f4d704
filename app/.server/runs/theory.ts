import { Equipment, Run, TheoryCheck, Track, ViewSetup, locking, sequelize } from "../db";
import { calibrationsForCheck } from "./applied-calibrations";
import { getLabSettings } from "../settings";
import { codeVersion } from "../version";
import { runTheoryCheck, type TheoryCheckInput, type TheoryCheckResult } from "~/lib/analysis/check";
import { runOmega } from "~/lib/analysis/run-omega";
import { chooseRate, type RateChoice } from "~/lib/analysis/rate-choice";
import { footageRateOfJob } from "./rate-from-footage";
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
export async function theoryInputFor(run: Run): Promise<{ input: TheoryCheckInput; track: Track; rate: RateChoice } | null> {
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
  // The rate read from the footage by the job that made the track, and the lab's choice between the two.
  const footage = await footageRateOfJob(tracks[0]!.jobId);
  const rate = chooseRate({ omegaSet: runOmega(run), omegaCalibrated: applied.omegaCalibrated, measured: footage.measured, use: settings.rateSource });
  const omegaCalibrated =
    rate.used === "rate from the footage" ? { value: rate.omega, stdError: rate.stdError, calibrationId: "rate from the footage" } : applied.omegaCalibrated;
  const input: TheoryCheckInput = {
    points: parseTrackPoints(tracks[0]!),
    setup: {
      centre: { x: setup.centreXPx, y: setup.centreYPx },
      pxPerM: applied.pxPerM,
      mirrored: setup.mirrored,
    },
    omegaSet: runOmega(run),
    omegaCalibrated,
    frameTimes: applied.frameTimes,
    calibrationsApplied: applied.calibrationsApplied,
    cameraMode: run.cameraMode,
    t0: 0,
    flatTable: Boolean(table?.flatTable),
    settings: { tolerance: settings.checkTolerancePct / 100 },
  };
  return { input, track: tracks[0]!, rate };
}

export interface StoredCheck {
  id: number;
  result: TheoryCheckResult;
  input: Omit<TheoryCheckInput, "points"> & { trackId: number; pointCount: number };
  /** The rate the check used and why, the rate measured from the footage and any disagreement; absent on checks made before it was kept. */
  rate: RateChoice | null;
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
  const result = withRateWords(runTheoryCheck(prepared.input), prepared.rate);
  const { points, ...rest } = prepared.input;
  const stored = {
    result,
    input: { ...rest, trackId: prepared.track.id, pointCount: points.length },
    rate: prepared.rate,
    provenance: { fingerprint, inputs },
  };
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

/**
 * The fit takes the footage's rate where it takes a calibrated one, so its words name the rate
 * calibration; when the footage's rate was used they say so instead.
 */
function withRateWords(result: TheoryCheckResult, rate: RateChoice): TheoryCheckResult {
  if (rate.used !== "rate from the footage") return result;
  return { ...result, reason: result.reason.replaceAll("the rate calibration in force", "the rate measured from the footage") };
}

/** A stored check row as the run page reads it; which row is current is currentCheck's to say. */
export function storedCheck(row: TheoryCheck): StoredCheck {
  const parsed = JSON.parse(row.result) as Pick<StoredCheck, "result" | "input"> & { rate?: RateChoice };
  return {
    id: row.id,
    result: parsed.result,
    input: parsed.input,
    rate: parsed.rate ?? null,
    codeVersion: row.codeVersion,
    createdAt: row.createdAt.toISOString(),
  };
}
