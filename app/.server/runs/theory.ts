import { correctionOfSetup } from "~/lib/projective/stored-marks";
import { Equipment, Run, TheoryCheck, Track, ViewSetup, locking, sequelize } from "../db";
import { calibrationsForCheck } from "./applied-calibrations";
import { getLabSettings } from "../settings";
import { codeVersion } from "../version";
import type { TheoryCheckInput, TheoryCheckResult } from "~/lib/analysis/check";
import { checkTracks, type StoredTrackCheck, type TrackCombination } from "~/lib/analysis/check-tracks";
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

/**
 * A run's tracks in their one numbering: `number` is given by tracking (1, 2, 3… by first frame,
 * then leftmost start; lib/tracking/link.ts) and is what the page, report, CSV and API show.
 */
export async function runTracks(runId: number) {
  return Track.findAll({
    where: { runId },
    order: [
      ["number", "ASC"],
      ["id", "ASC"],
    ],
  });
}

/** Builds the theory-check input of every track of the run: the same function the CLI and the browser call, one input per track. */
export async function theoryInputFor(run: Run): Promise<{ inputs: { track: Track; input: TheoryCheckInput }[]; tracks: Track[]; rate: RateChoice } | null> {
  const tracks = await runTracks(run.id);
  const setup = await ViewSetup.findOne({ where: { runId: run.id } });
  if (!tracks.length || !setup) return null;
  const table = await Equipment.findByPk(run.tableId);
  const settings = await getLabSettings();
  // Rate, timing and scale calibrations frozen on the run: what each changes, and the words saying so.
  const applied = await calibrationsForCheck(run, setup.scalePxPerM);
  // The rate read from the footage by the job that made the tracks, and the lab's choice between the two.
  const footage = await footageRateOfJob(tracks[0]!.jobId);
  const rate = chooseRate({ omegaSet: runOmega(run), omegaCalibrated: applied.omegaCalibrated, measured: footage.measured, use: settings.rateSource });
  const omegaCalibrated =
    rate.used === "rate from the footage" ? { value: rate.omega, stdError: rate.stdError, calibrationId: "rate from the footage" } : applied.omegaCalibrated;
  const base: Omit<TheoryCheckInput, "points"> = {
    setup: {
      centre: { x: setup.centreXPx, y: setup.centreYPx },
      pxPerM: applied.pxPerM,
      mirrored: setup.mirrored,
      // A camera not quite overhead: positions corrected before everything else (Decision 69).
      correction: correctionOfSetup(setup).correction?.homography ?? null,
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
  return { inputs: tracks.map((track) => ({ track, input: { ...base, points: parseTrackPoints(track) } })), tracks, rate };
}

/** A tracer in the check's words. */
export const tracerNoun = (run: Pick<Run, "tracer">) => (run.tracer === "dye" ? "dye patch" : "float");

/** The stored input: everything but the points, with the representative track (see checkTracks) and every track by number. */
export type StoredCheckInput = Omit<TheoryCheckInput, "points"> & {
  trackId: number;
  /** null in checks made before tracks were numbered in the check */
  trackNumber?: number | null;
  pointCount: number;
  tracks?: { id: number; number: number; pointCount: number }[];
};

export interface StoredCheck {
  id: number;
  /** the combined check (one track's own check when only one could be fitted) */
  result: TheoryCheckResult;
  /** one per track; a check made before every track was checked has its single track's here */
  checks: StoredTrackCheck[];
  combination: TrackCombination | null;
  input: StoredCheckInput;
  /** The rate the check used and why, the rate measured from the footage and any disagreement; absent on checks made before it was kept. */
  rate: RateChoice | null;
  codeVersion: string;
  createdAt: string;
}

/**
 * Runs the theory check on every track of the run, combines them (lib/analysis/check-tracks) and
 * stores the result with what is needed to reproduce it, and the fingerprint of its inputs (see
 * ./provenance). A signed-off run's check never changes; tracks made from other frames or another
 * view setup than the present ones are not fitted.
 */
export async function checkRun(runId: number, userId: number | null) {
  const run = await Run.findByPk(runId);
  if (!run || run.state === "signed_off") return null;
  const prepared = await theoryInputFor(run);
  if (!prepared) return null;
  const { fingerprint, inputs } = await presentFingerprint(run, prepared.tracks);
  if (!fingerprint) return null;
  const checked = checkTracks(
    prepared.inputs.map(({ track, input }) => ({ number: track.number, input })),
    tracerNoun(run),
  );
  if (!checked) return null;
  const result = withRateWords(checked.check, prepared.rate);
  const representative =
    prepared.tracks.find((t) => t.number === checked.combination?.representativeTrack) ??
    [...prepared.tracks].sort((a, b) => b.pointCount - a.pointCount || a.number - b.number)[0]!;
  const { points: _points, ...rest } = prepared.inputs[0]!.input;
  const stored = {
    result,
    checks: checked.checks,
    combination: checked.combination,
    input: {
      ...rest,
      trackId: representative.id,
      trackNumber: representative.number,
      pointCount: representative.pointCount,
      tracks: prepared.tracks.map((t) => ({ id: t.id, number: t.number, pointCount: t.pointCount })),
    },
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
        trackId: representative.id,
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
  const parsed = JSON.parse(row.result) as Pick<StoredCheck, "result" | "input"> & Partial<Pick<StoredCheck, "checks" | "combination">> & { rate?: RateChoice };
  // A check stored before every track was checked holds one track's result: that is its only per-track check.
  const checks = parsed.checks ?? [legacyTrackCheck(parsed.result, parsed.input)];
  return {
    id: row.id,
    result: parsed.result,
    checks,
    combination: parsed.combination ?? null,
    input: parsed.input,
    rate: parsed.rate ?? null,
    codeVersion: row.codeVersion,
    createdAt: row.createdAt.toISOString(),
  };
}

function legacyTrackCheck(result: TheoryCheckResult, input: StoredCheckInput): StoredTrackCheck {
  const { series: _series, ...rest } = result;
  return { ...rest, trackNumber: input.trackNumber ?? null, combined: result.fMeasured !== null, pull: null, flagged: false };
}
