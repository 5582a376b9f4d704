import type { AppliedCalibration } from "~/lib/calibrations-applied";

const useWords: Record<AppliedCalibration["use"], string> = {
  applied: "Applied",
  not_used: "Not used",
  flagged: "Flagged",
  none: "None in force",
};

/**
 * What the theory check did with each calibration frozen on the run, in the check's own words.
 * A check stored before this was recorded has none: say so rather than imply anything was applied.
 */
export function CalibrationsAppliedList({ entries }: { entries: readonly AppliedCalibration[] | null | undefined }) {
  if (!entries || entries.length === 0) {
    return <p className="text-muted">Not recorded with this check: only the rate calibration (named with f predicted) can have been applied.</p>;
  }
  return (
    <ul className="flex flex-col gap-1" data-testid="calibrations-applied">
      {entries.map((e, i) => (
        <li key={`${e.kind}-${e.calibrationId ?? i}`} className={e.use === "flagged" ? "font-bold text-caution-ink" : undefined}>
          <span className="font-bold">{useWords[e.use]}:</span> {e.text}
        </li>
      ))}
    </ul>
  );
}
