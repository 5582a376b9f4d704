import type { Run, ViewSetup } from "../db";
import type { TrackingSetup } from "~/lib/tracking/types";

/** What the tracker needs from a run and its view setup: the tracking job and the streaming tracker read it the same way. */
export function trackingSetupFrom(run: Pick<Run, "tracer">, setup: ViewSetup): TrackingSetup {
  return {
    tracer: run.tracer,
    centre: { x: setup.centreXPx, y: setup.centreYPx },
    tankEdge:
      setup.tankEdgeRPx && setup.tankEdgeXPx !== null && setup.tankEdgeYPx !== null
        ? { cx: setup.tankEdgeXPx, cy: setup.tankEdgeYPx, r: setup.tankEdgeRPx }
        : null,
    mirrored: setup.mirrored,
  };
}
