import type { StreamPlan } from "~/lib/frame-stream";
import { runLabel } from "~/lib/runs";
import { Notice } from "~/components/ui/notice";

/**
 * Says on the run page whether frames are tracked as they land (Decision 67): before a drop, what
 * a drop of stills will do on this run; after one, what the uploader did with it and why.
 */
export function StreamNotice({ plan, framesInRun, setup }: { plan: StreamPlan | null; framesInRun: number; setup: "present" | "carried over" | "none" }) {
  if (plan?.stream)
    return (
      <Notice kind="info" title="Tracked as they land">
        {plan.expectedFrames} stills, sent with their places in the stack, the ones the still background is made of first. Each is searched for the tracer as it
        arrives, and the verdict follows the last one without pressing a button.
      </Notice>
    );
  if (plan)
    return (
      <Notice kind="info" title="Not tracked as they land">
        Because {plan.why}. Start tracking once every frame is in.
      </Notice>
    );
  if (framesInRun > 0) return <p className="text-sm text-muted">Frames added to a run that has frames are tracked when tracking is started again.</p>;
  if (setup === "none")
    return (
      <p className="text-sm text-muted" data-testid="stream-hint">
        Frames are not tracked as they land on this run: it has no view setup yet. Set up the view on the first frames, then start tracking.
      </p>
    );
  return (
    <p className="text-sm text-muted" data-testid="stream-hint">
      Stills dropped here are tracked as they land{setup === "carried over" ? ", with the carried-over view setup" : ""}, and the verdict follows the last one.
      A ZIP or a video is tracked once it is all in.
    </p>
  );
}

/** The opt-in to carry over the camera's last view setup, for a run that has none. */
export function CarryOverChoice({
  offer,
  checked,
  disabled,
  onChange,
}: {
  offer: { fromRunId: number; width: number; height: number };
  checked: boolean;
  disabled?: boolean;
  onChange: (checked: boolean) => void;
}) {
  return (
    <label className="flex items-start gap-3 text-left">
      <input
        type="checkbox"
        name="carryOverSetup"
        value="yes"
        className="mt-1 size-6 shrink-0"
        checked={checked}
        disabled={disabled}
        onChange={(e) => onChange(e.target.checked)}
      />
      <span>
        <span className="font-bold">Carry over the view setup of {runLabel(offer.fromRunId)}</span>, this camera's last one (made on {offer.width} ×{" "}
        {offer.height} px frames). It is copied to this run with the first frame of that size, and can be changed afterwards like any setup.
      </span>
    </label>
  );
}
