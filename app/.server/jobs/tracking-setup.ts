import type { Run, ViewSetup } from "../db";
import type { TrackingSetup } from "~/lib/tracking/types";
import { runOmega } from "~/lib/analysis/run-omega";
import { correctionOfSetup } from "~/lib/projective/stored-marks";
import type { RateSettings } from "../tracking/rate-pass";

/** What the tracker needs from a run and its view setup: the tracking job and the streaming tracker read it the same way. */
export function trackingSetupFrom(run: Pick<Run, "tracer" | "cameraMode" | "setRateRpm" | "direction">, setup: ViewSetup): TrackingSetup {
  const omega = runOmega(run);
  return {
    tracer: run.tracer,
    centre: { x: setup.centreXPx, y: setup.centreYPx },
    tankEdge:
      setup.tankEdgeRPx && setup.tankEdgeXPx !== null && setup.tankEdgeYPx !== null
        ? { cx: setup.tankEdgeXPx, cy: setup.tankEdgeYPx, r: setup.tankEdgeRPx }
        : null,
    mirrored: setup.mirrored,
    // What turns in the view, for the background's second model (lib/tracking/turning-background.ts).
    rotation: Number.isFinite(omega) && omega !== 0 ? { omega, cameraMode: run.cameraMode } : null,
    // A camera not quite overhead: the turning model turns rigidly in the corrected plane (Decision 76).
    correction: correctionOfSetup(setup).correction?.homography ?? null,
  };
}

/** What the rate pass reads the table's rate with: the tracking job's pass and the streaming one build it here, the same way. */
export function rateSettingsFrom(run: Run, setup: ViewSetup): RateSettings {
  const tracking = trackingSetupFrom(run, setup);
  return {
    cameraMode: run.cameraMode,
    centre: tracking.centre,
    mirrored: tracking.mirrored,
    tankEdge: tracking.tankEdge,
    rateMark: setup.rateMarkXPx != null && setup.rateMarkYPx != null ? { x: setup.rateMarkXPx, y: setup.rateMarkYPx } : null,
    omegaSet: runOmega(run),
  };
}
