import { Calibration, type Run } from "../db";
import { calibrationSnapshot } from "./service";
import { trueRateFromCalibration, type CalibrationKind } from "~/lib/calibrations";
import {
  DEFAULT_SCALE_TOLERANCE_PCT,
  describeRate,
  frameTimeCorrection,
  noneInForce,
  notUsed,
  scaleInUse,
  type AppliedCalibration,
  type FrameTimeCorrection,
} from "~/lib/calibrations-applied";
import { rpmToRadPerS } from "~/lib/analysis/units";
import { omegaFromTableRate } from "~/lib/analysis/run-omega";

export type RateInForce = { value: number; stdError: number; calibrationId: number } | null;

/** The record of this kind frozen on the run for this item (signed records never change, so reading it now is reading it then). */
async function frozenRecord(run: Run, kind: CalibrationKind, equipmentId: number) {
  const entry = calibrationSnapshot(run).inForce.find((c) => c.kind === kind && c.equipmentId === equipmentId);
  if (!entry) return { id: null, record: null };
  return { id: Number(entry.id), record: await Calibration.findByPk(entry.id) };
}

function rateLine(cal: Calibration) {
  if (cal.slope === null || cal.interceptRpm === null || cal.slopeStdError === null || cal.interceptStdErrorRpm === null) return null;
  return {
    slope: cal.slope,
    intercept: cal.interceptRpm,
    slopeStdError: cal.slopeStdError,
    interceptStdError: cal.interceptStdErrorRpm,
    slopeInterceptCovariance: cal.slopeInterceptCovarianceRpm ?? 0,
  };
}

/**
 * The true rate (rad/s, signed) at the run's set rate, from the table's rate calibration that was
 * in force when the run was logged (the run's frozen snapshot names it).
 */
export async function rateInForce(run: Run): Promise<RateInForce> {
  return (await calibrationsForCheck(run, null)).omegaCalibrated ?? null;
}

/** The scale calibration frozen on the run for its camera, for the setup page to offer. */
export async function scaleCalibrationOfRun(run: Run) {
  const { id, record } = await frozenRecord(run, "scale", run.cameraId);
  if (id === null || !record || record.scalePxPerM === null) return null;
  return {
    id,
    scalePxPerM: record.scalePxPerM,
    scaleUncertaintyPxPerM: record.scaleUncertaintyPxPerM,
    tolerancePct: record.tolerancePct ?? DEFAULT_SCALE_TOLERANCE_PCT,
  };
}

export interface CalibrationsForCheck {
  omegaCalibrated?: { value: number; stdError: number; calibrationId: number };
  /** px/m for the check: the view setup's, or the scale calibration's when the setup has none */
  pxPerM: number | null;
  frameTimes?: FrameTimeCorrection;
  /** rate, timing, scale: what was done with each, in words */
  calibrationsApplied: AppliedCalibration[];
}

/** What the theory check takes from each calibration frozen on the run, and the words for its provenance. */
export async function calibrationsForCheck(run: Run, setupPxPerM: number | null): Promise<CalibrationsForCheck> {
  const [rate, timing, scale] = await Promise.all([
    frozenRecord(run, "rate", run.tableId),
    frozenRecord(run, "timing", run.cameraId),
    frozenRecord(run, "scale", run.cameraId),
  ]);
  const out: CalibrationsForCheck = { pxPerM: setupPxPerM, calibrationsApplied: [] };

  if (rate.id === null) out.calibrationsApplied.push(noneInForce("rate"));
  else {
    const line = rate.record ? rateLine(rate.record) : null;
    if (!line) out.calibrationsApplied.push(notUsed("rate", rate.id, "the record has no fitted line; f predicted is from the set rate, uncalibrated."));
    else {
      const { rpm, stdErrorRpm } = trueRateFromCalibration(line, run.setRateRpm);
      out.omegaCalibrated = { value: omegaFromTableRate(rpm, run.direction), stdError: rpmToRadPerS(stdErrorRpm), calibrationId: rate.id };
      out.calibrationsApplied.push(describeRate({ calibrationId: rate.id, setRpm: run.setRateRpm, trueRpm: rpm, stdErrorRpm }));
    }
  }

  if (timing.id === null) out.calibrationsApplied.push(noneInForce("timing"));
  else {
    const r = timing.record;
    const { correction, entry } = frameTimeCorrection(
      {
        calibrationId: timing.id,
        nominalFrameRateFps: r?.nominalFrameRateFps ?? null,
        trueFrameRateFps: r?.trueFrameRateFps ?? null,
        trueFrameRateUncertaintyFps: r?.trueFrameRateUncertaintyFps ?? null,
      },
      run.frameRateFps,
    );
    if (correction) out.frameTimes = correction;
    out.calibrationsApplied.push(entry);
  }

  if (scale.id === null) out.calibrationsApplied.push(noneInForce("scale"));
  else {
    const r = scale.record;
    const used = scaleInUse(setupPxPerM, {
      calibrationId: scale.id,
      scalePxPerM: r?.scalePxPerM ?? null,
      scaleUncertaintyPxPerM: r?.scaleUncertaintyPxPerM ?? null,
      tolerancePct: r?.tolerancePct ?? null,
    });
    out.pxPerM = used.pxPerM;
    out.calibrationsApplied.push(used.entry);
  }
  return out;
}
