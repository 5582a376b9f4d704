import { ButtonA, ButtonLink } from "~/components/ui/button";

/** The run's three exports: tracks as CSV (only once there are tracks), the run as JSON, the printable report. */
export function RunExportLinks({ runId, hasTracks, showReport = true }: { runId: number; hasTracks: boolean; showReport?: boolean }) {
  return (
    <div className="no-print flex flex-wrap gap-3">
      {hasTracks ? (
        <ButtonA href={`/api/v1/runs/${runId}/tracks.csv`} download>
          Tracks (CSV)
        </ButtonA>
      ) : (
        <span className="inline-flex min-h-12 items-center text-muted">Tracks CSV: no tracks yet</span>
      )}
      <ButtonA href={`/api/v1/runs/${runId}/export.json`} download>
        Run (JSON)
      </ButtonA>
      {showReport ? <ButtonLink to={`/runs/${runId}/report`}>Printable report</ButtonLink> : null}
    </div>
  );
}
