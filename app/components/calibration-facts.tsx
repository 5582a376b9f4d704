import type { CalibrationKind, CalibrationStanding } from "~/lib/calibrations";
import { standingLabels } from "~/lib/calibrations";
import { formatNumber } from "~/lib/number-format";
import { Tag } from "./ui/card";

export function StandingTag({ standing }: { standing: CalibrationStanding }) {
  const tone = standing === "in_force" ? "agrees" : standing === "past_due" ? "disagrees" : standing === "draft" ? "caution" : "neutral";
  return <Tag tone={tone}>{standingLabels[standing]}</Tag>;
}

interface Result {
  kind: CalibrationKind;
  slope: number | null;
  interceptRpm: number | null;
  residualSdRpm: number | null;
  maxDeviationPct: number | null;
  tolerancePct: number | null;
  passed: boolean | null;
  scalePxPerM: number | null;
  scaleUncertaintyPxPerM: number | null;
  trueFrameRateFps: number | null;
  trueFrameRateUncertaintyFps: number | null;
  frameRateDeviationPct: number | null;
}

/** The one-line result of a record, as read on the equipment page and in lists. */
export function calibrationResult(c: Result): string {
  if (c.kind === "rate") {
    const b = c.interceptRpm ?? 0;
    return `measured = ${formatNumber(c.slope, 5)} × set ${b < 0 ? "−" : "+"} ${formatNumber(Math.abs(b), 3)} rpm; residual SD ${formatNumber(c.residualSdRpm, 2)} rpm; worst ${formatNumber(c.maxDeviationPct, 2)} % (tolerance ${formatNumber(c.tolerancePct, 6)} %) — ${c.passed ? "passes" : "fails"}`;
  }
  if (c.kind === "scale")
    return `${formatNumber(c.scalePxPerM, 5)} ± ${formatNumber(c.scaleUncertaintyPxPerM, 2)} px/m${c.tolerancePct !== null ? `; view setups within ${formatNumber(c.tolerancePct, 6)} % agree` : ""}`;
  return `${formatNumber(c.trueFrameRateFps, 6)} ± ${formatNumber(c.trueFrameRateUncertaintyFps, 2)} frames/s (${(c.frameRateDeviationPct ?? 0) >= 0 ? "+" : ""}${formatNumber(c.frameRateDeviationPct, 2)} % from nominal)`;
}
