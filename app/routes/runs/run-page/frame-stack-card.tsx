import { Card } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { FrameUploader } from "~/components/runs/frame-uploader";
import { formatFixed } from "~/lib/number-format";
import type { RunPageData } from "../run";

/** The run's frames as a filmstrip, what is missing from storage, and the uploader for those who may change the run. */
export function FrameStackCard({ d }: { d: RunPageData }) {
  const { run, canChange } = d;
  return (
    <Card title={`Frame stack (${d.frames.length})`}>
      {d.frameFiles.missing ? (
        <div className="mb-4" data-testid="frames-missing">
          <Notice kind="error" title={`${d.frameFiles.missing} of ${d.frames.length} frames are missing from storage`}>
            Their files are no longer where Tankside keeps them, so they cannot be shown and tracking cannot read them.{" "}
            {canChange
              ? "Bring the same frames again (the same files or ZIP) to put them back; frames already there are not added twice."
              : "A technician can put them back by bringing the same frames again."}
          </Notice>
        </div>
      ) : null}
      {d.frameFiles.unavailable ? (
        <div className="mb-4">
          <Notice kind="caution" title="The file store cannot be reached just now">
            The frames may not show until it answers again.
          </Notice>
        </div>
      ) : null}
      {d.sharedFiles.length ? (
        <p className="mb-2 text-sm" data-testid="shared-frames">
          {d.sharedFiles.map((s) => `${s.count} of these frames are the files of ${s.label}, stored once and shared with it.`).join(" ")}
        </p>
      ) : null}
      {d.frames.length ? (
        <ol className="flex gap-2 overflow-x-auto pb-2" aria-label="Frames" data-testid="filmstrip">
          {d.frames.map((f) => (
            <li key={f.id} className="shrink-0">
              {f.missing ? (
                <span
                  title={`${f.name}: file missing from storage`}
                  className="flex h-[68px] w-[120px] items-center justify-center rounded border border-dashed border-disagrees-ink bg-disagrees-bg px-1 text-center text-sm text-disagrees-ink"
                >
                  {`Frame ${f.position + 1} missing`}
                </span>
              ) : (
                <a href={`/runs/${run.id}/frames/${f.id}/image`} title={`${f.name}${f.timeS !== null ? ` at ${formatFixed(f.timeS, 3)} s` : ""}`}>
                  <img
                    src={`/runs/${run.id}/frames/${f.id}/image?size=thumb`}
                    loading="lazy"
                    width={120}
                    height={68}
                    alt={`Frame ${f.position + 1}: ${f.name}`}
                    className="h-[68px] w-[120px] rounded border border-line object-cover"
                  />
                </a>
              )}
            </li>
          ))}
        </ol>
      ) : (
        <p className="text-muted">No frames yet.</p>
      )}
      {canChange ? (
        <div className="mt-4">
          <FrameUploader runId={run.id} frameRate={run.frameRateFps} start={{ framesInRun: d.frames.length, hasSetup: Boolean(d.setup), offer: d.carryOver }} />
        </div>
      ) : null}
    </Card>
  );
}
