import type { ViewGeometry } from "~/lib/analysis/frames";
import type { StoredCheckView } from "./types";
import { TheoryPlots } from "~/components/plots/theory-plots";
import { formatNumber } from "~/lib/number-format";
import { CalibrationsAppliedList } from "./calibrations-applied-list";
import { useLabTime } from "~/components/lab-time";
import { TableHead } from "~/components/ui/table-head";

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

/** Every track's own check, and what combining them says: one row a track, by its number in the run. */
export function TrackChecksTable({ check }: { check: Pick<StoredCheckView, "checks" | "combination"> }) {
  const k = check.combination;
  return (
    <div data-testid="track-checks">
      <h3 className="font-bold">Each track</h3>
      {k ? <p className="mt-1">{k.words}</p> : null}
      <table className="mt-2 w-full text-left">
        <TableHead columns={["Track", "f (1/s)", "Drag (1/s)", "Points", "Pull", "Verdict alone"]} compact spaced={false} />
        <tbody>
          {check.checks.map((t, i) => (
            <tr key={t.trackNumber ?? `old-${i}`} className={`border-b border-line ${t.flagged ? "font-bold" : ""}`}>
              <td className="py-1">{t.trackNumber ?? "—"}</td>
              <td className="py-1 font-mono">{t.fMeasured === null ? "—" : `${formatNumber(t.fMeasured, 4)} ± ${formatNumber(t.fStdError, 2)}`}</td>
              <td className="py-1 font-mono">{t.drag === null ? "—" : `${formatNumber(t.drag, 3)} ± ${formatNumber(t.dragStdError, 2)}`}</td>
              <td className="py-1">{t.nPoints}</td>
              <td className="py-1">
                {t.pull === null ? "—" : formatNumber(t.pull, 2)}
                {t.flagged ? " — disagrees with the others" : ""}
              </td>
              <td className="py-1">{t.combined ? verdictWords[t.verdict] : `left out: ${t.reason}`}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {k && k.n > 1 ? (
        <p className="mt-1 text-sm text-muted">
          Combined: f = {formatNumber(k.fMean, 4)} ± {formatNumber(k.stdError * k.scale, 2)} 1/s (weighted by 1/error²); χ² = {formatNumber(k.chi2, 3)} for{" "}
          {k.dof} degrees of freedom, Birge ratio {formatNumber(k.birgeRatio, 3)}
          {k.scale > 1 ? `, so the error is widened ×${formatNumber(k.scale, 2)}` : ""}.
        </p>
      ) : null}
    </div>
  );
}

/** The theory check as a technician reads it: the verdict and its reason first, then the numbers, then the plots. */
export function TheoryCheckPanel({ check, setup, printable }: { check: StoredCheckView; setup: ViewGeometry; printable?: boolean }) {
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
      <TrackChecksTable check={check} />
      <div>
        <h3 className="font-bold">Calibrations in this check</h3>
        <CalibrationsAppliedList entries={r.calibrationsApplied} />
      </div>
      <p className="text-sm text-muted">
        Checked {time.dateTime(check.createdAt)} with Tankside {check.codeVersion},{" "}
        {check.combination && check.combination.n > 1
          ? `on ${check.combination.n} tracks combined (plots, drag and circle from track ${check.combination.representativeTrack}, ${check.input.pointCount} points)`
          : `on track ${check.input.trackNumber ?? "—"} (${check.input.pointCount} points)`}
        , camera {check.input.cameraMode === "lab" ? "lab-fixed (de-rotated by −Ω(t − t₀))" : "co-rotating"}
        {check.input.flatTable ? ", flat table (centrifugal term included)" : ""}.
      </p>
      <TheoryPlots result={r} setup={setup} key={printable ? "print" : "screen"} />
    </div>
  );
}
