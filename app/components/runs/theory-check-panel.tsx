import type { StoredCheckView } from "./types";
import { TheoryPlots } from "~/components/plots/theory-plots";
import { formatNumber } from "~/lib/number-format";
import { CalibrationsAppliedList } from "./calibrations-applied-list";
import { useLabTime } from "~/components/lab-time";

const verdictWords = { agrees: "Agrees with theory", disagrees: "Disagrees with theory", inconclusive: "Inconclusive" } as const;

function Figure({ label, value, unit, sub }: { label: string; value: string; unit?: string; sub?: string }) {
  return (
    <div className="rounded-lg border border-line bg-paper p-3">
      <p className="text-sm text-muted">{label}</p>
      <p className="font-mono text-xl font-bold">
        {value}
        {unit && value !== "—" ? <span className="ml-1 font-sans text-base font-normal text-muted">{unit}</span> : null}
      </p>
      {sub ? <p className="text-sm text-muted">{sub}</p> : null}
    </div>
  );
}

/** The theory check as a technician reads it: the verdict and its reason first, then the numbers, then the plots. */
export function TheoryCheckPanel({
  check,
  setup,
  printable,
}: {
  check: StoredCheckView;
  setup: { centre: { x: number; y: number }; pxPerM: number | null; mirrored: boolean };
  printable?: boolean;
}) {
  const time = useLabTime();
  const r = check.result;
  const tone =
    r.verdict === "agrees"
      ? "border-agrees-ink bg-agrees-bg text-agrees-ink"
      : r.verdict === "disagrees"
        ? "border-disagrees-ink bg-disagrees-bg text-disagrees-ink"
        : "border-inconclusive-ink bg-inconclusive-bg text-inconclusive-ink";
  const pct = r.ratio !== null ? `${formatNumber((r.ratio - 1) * 100, 2)} %` : "—";
  return (
    <div className="flex flex-col gap-4" data-testid="theory-check">
      <div className={`rounded-card border-l-8 p-4 ${tone}`}>
        <p className="text-2xl font-bold" data-testid="verdict">
          {verdictWords[r.verdict]}
        </p>
        <p className="mt-1 text-lg">{r.reason}</p>
      </div>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure
          label="f measured"
          value={r.fMeasured === null ? "—" : `${formatNumber(r.fMeasured, 4)} ± ${formatNumber(r.fStdError, 2)}`}
          unit="1/s"
          sub={r.fStdErrorTiming ? "± one standard error (the fit and the timing check)" : "± one standard error"}
        />
        <Figure
          label="f predicted = 2Ω"
          value={r.fPredicted === null ? "—" : formatNumber(r.fPredicted, 4)}
          unit="1/s"
          sub={r.omegaSource === "rate calibration" ? `rate calibration #${r.calibrationId ?? "?"} in force` : "set rate, uncalibrated"}
        />
        <Figure
          label="measured ÷ predicted"
          value={r.ratio === null ? "—" : formatNumber(r.ratio, 4)}
          sub={`difference ${pct}; tolerance ${formatNumber(r.settings.tolerance * 100, 3)} %`}
        />
        <Figure
          label="Sense of deflection"
          value={r.deflection === null ? "—" : r.deflection === "right" ? "to the right" : "to the left"}
          sub={
            r.omegaSource
              ? `theory: ${r.fPredicted !== null && r.fPredicted > 0 ? "right (counterclockwise table)" : r.fPredicted !== null ? "left (clockwise table)" : "—"}`
              : undefined
          }
        />
        <Figure label="Drag rate r" value={r.drag === null ? "—" : `${formatNumber(r.drag, 3)} ± ${formatNumber(r.dragStdError, 2)}`} unit="1/s" />
        <Figure
          label="Inertial circle radius"
          value={r.circle ? (r.circle.radiusM !== null ? formatNumber(r.circle.radiusM * 100, 4) : formatNumber(r.circle.radiusPx, 4)) : "—"}
          unit={r.circle?.radiusM !== null ? "cm" : "px"}
          sub={r.predictedRadiusM !== null ? `predicted |V|/|f| = ${formatNumber(r.predictedRadiusM * 100, 3)} cm` : undefined}
        />
        <Figure
          label="Period (from the direction of motion)"
          value={formatNumber(r.periodFromAngle, 4)}
          unit="s"
          sub={r.fPredicted ? `theory 2π/|f| = ${formatNumber((2 * Math.PI) / Math.abs(r.fPredicted), 4)} s` : undefined}
        />
        <Figure
          label="Points used"
          value={String(r.nPoints)}
          sub={`${r.nLeftOut} left out · window ${r.settings.window ?? "—"} frames, order ${r.settings.polyOrder}`}
        />
      </div>
      <div>
        <h3 className="font-bold">Calibrations in this check</h3>
        <CalibrationsAppliedList entries={r.calibrationsApplied} />
      </div>
      <p className="text-sm text-muted">
        Checked {time.dateTime(check.createdAt)} with Tankside {check.codeVersion}, on track #{check.input.trackId} ({check.input.pointCount} points), camera{" "}
        {check.input.cameraMode === "lab" ? "lab-fixed (de-rotated by −Ω(t − t₀))" : "co-rotating"}
        {check.input.flatTable ? ", flat table (centrifugal term included)" : ""}.
      </p>
      <TheoryPlots result={r} setup={setup} key={printable ? "print" : "screen"} />
    </div>
  );
}
