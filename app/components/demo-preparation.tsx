import { Link } from "react-router";
import { Notice } from "~/components/ui/notice";
import { formatNumber } from "~/lib/number-format";

export interface DemoPreparationProgress {
  runs: number;
  prepared: number;
  rendering: { runId: number; frames: number; of: number } | null;
}

/** `npm run demo` only: how far the demo runs' frames are, while the server renders them in the background. */
export function DemoPreparation({ progress }: { progress: DemoPreparationProgress | null }) {
  if (!progress) return null;
  const { runs, prepared, rendering } = progress;
  return (
    <div className="mb-6">
      <Notice title="The demo runs are being prepared">
        <p>
          {formatNumber(prepared)} of {formatNumber(runs)} demo runs have all their frames and are tracked in turn (each run's page shows its tracking).{" "}
          {rendering ? (
            <>
              <Link to={`/runs/${rendering.runId}`}>Run {rendering.runId}</Link>: {formatNumber(rendering.frames)} of {formatNumber(rendering.of)} frames
              rendered.
            </>
          ) : null}{" "}
          Reload this page to see how far it is.
        </p>
      </Notice>
    </div>
  );
}
