/**
 * The table's rate read from the footage, as the tracking job stored it (migration 0013), and the
 * rate the check uses given the lab's setting (lib/analysis/rate-choice). The check's inputs carry
 * the setting and the measurement, so a change of either makes the check out of date.
 */
import type { Transaction } from "sequelize";
import { Track, TrackingJob, type Run } from "../db";
import { getLabSettings } from "../settings";
import { rateInForce } from "./applied-calibrations";
import { chooseRate, DEFAULT_RATE_SOURCE, type MeasuredRate, type RateSource } from "~/lib/analysis/rate-choice";
import { runOmega } from "~/lib/analysis/run-omega";
import { radPerSToRpm } from "~/lib/analysis/units";

export interface FootageRate {
  measured: MeasuredRate | null;
  /** Why there is no measurement, in words (null when there is one, or the job predates the pass). */
  note: string | null;
}

export async function footageRateOfJob(jobId: number | null | undefined, transaction?: Transaction): Promise<FootageRate> {
  if (!jobId) return { measured: null, note: null };
  const job = await TrackingJob.findByPk(jobId, {
    attributes: ["id", "measuredOmega", "measuredOmegaSe", "measuredOmegaMethod", "measuredOmegaPoints", "measuredOmegaNote"],
    transaction,
  });
  if (!job) return { measured: null, note: null };
  if (job.measuredOmega === null || job.measuredOmegaSe === null || !Number.isFinite(job.measuredOmega)) {
    return { measured: null, note: job.measuredOmegaNote };
  }
  return {
    measured: { omega: job.measuredOmega, stdError: job.measuredOmegaSe, method: job.measuredOmegaMethod ?? "frames", nPoints: job.measuredOmegaPoints ?? 0 },
    note: null,
  };
}

/**
 * The part of a check's inputs about the rate: the lab's choice, whether the footage's rate is the
 * one used, and the measurement. Left out while the setting is the default and nothing was
 * measured, so checks made before the rate was read keep their fingerprints.
 */
export function rateInputs(setting: RateSource, measured: MeasuredRate | null) {
  if (setting === DEFAULT_RATE_SOURCE && !measured) return undefined;
  return {
    setting,
    fromFootage: setting === "footage" && measured !== null,
    measured: measured ? { omega: measured.omega, stdError: measured.stdError, method: measured.method, nPoints: measured.nPoints } : null,
  };
}

/**
 * The run page's view of the table's rate: set, calibrated and measured from the footage, with
 * what the lab's setting would use now and any disagreement. Read from the longest track's job,
 * the one the check fits.
 */
export async function tableRateSummary(run: Run) {
  const track = await Track.findOne({
    where: { runId: run.id },
    attributes: ["id", "jobId"],
    order: [
      ["pointCount", "DESC"],
      ["id", "ASC"],
    ],
  });
  const job = track ? null : await TrackingJob.findOne({ where: { runId: run.id, state: "done" }, order: [["id", "DESC"]], attributes: ["id"] });
  const [footage, calibrated, settings] = await Promise.all([footageRateOfJob(track?.jobId ?? job?.id), rateInForce(run), getLabSettings()]);
  const choice = chooseRate({ omegaSet: runOmega(run), omegaCalibrated: calibrated ?? undefined, measured: footage.measured, use: settings.rateSource });
  return {
    setRpm: run.setRateRpm,
    calibrated: calibrated
      ? { rpm: Math.abs(radPerSToRpm(calibrated.value)), stdErrorRpm: Math.abs(radPerSToRpm(calibrated.stdError)), calibrationId: calibrated.calibrationId }
      : null,
    measured: footage.measured
      ? {
          rpm: Math.abs(radPerSToRpm(footage.measured.omega)),
          stdErrorRpm: Math.abs(radPerSToRpm(footage.measured.stdError)),
          method: footage.measured.method,
          frames: footage.measured.nPoints,
          sameSense: Math.sign(footage.measured.omega) === Math.sign(runOmega(run)),
        }
      : null,
    note: footage.note,
    setting: settings.rateSource,
    used: choice.used,
    why: choice.why,
    disagreement: choice.disagreement,
  };
}
export type TableRateSummary = Awaited<ReturnType<typeof tableRateSummary>>;
