import { useEffect, useState } from "react";
import { useFetcher, useRevalidator } from "react-router";
import { Button } from "~/components/ui/button";
import { Notice } from "~/components/ui/notice";
import { Tag } from "~/components/ui/card";

interface JobView {
  id: number;
  state: "queued" | "running" | "done" | "failed" | "cancelled";
  framesDone: number;
  framesTotal: number;
  percent: number;
  error: string | null;
  finishedAt: string | null;
}
interface TrackingView {
  job: JobView | null;
  /** The job is done and the theory check that follows it is not made yet. */
  checkAwaited: boolean;
  tracks: { id: number; number: number; points: number; detectedShare: number | null; jitterPx: number | null }[];
}
interface ErrorView {
  error: { code: string; message: string };
}

const stateWords: Record<JobView["state"], string> = {
  queued: "Queued",
  running: "Running",
  done: "Done",
  failed: "Failed",
  cancelled: "Cancelled",
};

/** Starts, follows (by polling the tracking route) and cancels the run's tracking job. */
export function TrackingPanel({
  runId,
  initial,
  canChange,
  ready,
  readyReason,
}: {
  runId: number;
  initial: TrackingView;
  canChange: boolean;
  ready: boolean;
  readyReason: string | null;
}) {
  const poll = useFetcher<TrackingView>();
  const [controlError, setControlError] = useState<string | null>(null);
  const [sending, setSending] = useState(false);
  const revalidator = useRevalidator();
  const view = poll.data ?? initial;
  const job = view.job;
  const active = job?.state === "queued" || job?.state === "running";
  // Poll while the job runs, and after it while its theory check is still being made.
  const following = active || view.checkAwaited;

  // Once every frame is searched only the linking, the rate and the check are left, a second or two
  // after a streamed stack's last frame: ask more often then, so the verdict shows as soon as it is made.
  const closing = view.checkAwaited || (job !== null && job.framesTotal > 0 && job.framesDone >= job.framesTotal);
  const every = closing ? 250 : 1000;
  useEffect(() => {
    if (!following) return;
    const timer = setInterval(() => {
      if (poll.state === "idle") void poll.load(`/api/v1/runs/${runId}/tracking`);
    }, every);
    return () => clearInterval(timer);
  }, [following, runId, poll, every]);

  // When a job ends, and again when its check is made, reload the page's data so the tracks, the
  // overlay and the verdict appear.
  const finishedKey = job && !active ? `${job.id}-${job.state}-${view.checkAwaited ? "checking" : "checked"}` : null;
  useEffect(() => {
    if (finishedKey && poll.data) void revalidator.revalidate();
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [finishedKey]);

  // Plain fetch for start and cancel: a refusal (409) is a message for this panel, not an error page.
  async function send(method: "POST" | "DELETE") {
    setSending(true);
    setControlError(null);
    try {
      const res = await fetch(`/api/v1/runs/${runId}/tracking`, { method, headers: { Accept: "application/json" } });
      if (!res.ok) {
        const body = (await res.json().catch(() => null)) as ErrorView | null;
        setControlError(body?.error.message ?? `The server answered ${res.status}.`);
      }
      void poll.load(`/api/v1/runs/${runId}/tracking`);
    } catch {
      setControlError("Tankside could not be reached; check the connection and try again.");
    } finally {
      setSending(false);
    }
  }

  return (
    <div className="flex flex-col gap-4" data-testid="tracking-panel">
      {job ? (
        <div className="flex flex-col gap-2">
          <p className="flex flex-wrap items-center gap-3">
            <span className="font-bold">Tracking job #{job.id}</span>
            <Tag tone={job.state === "done" ? "agrees" : job.state === "failed" ? "disagrees" : job.state === "cancelled" ? "neutral" : "tank"}>
              {stateWords[job.state]}
            </Tag>
            <span className="text-muted" data-testid="tracking-progress">
              {job.framesDone} of {job.framesTotal} frames ({job.percent}%)
            </span>
          </p>
          {active ? <progress className="h-5 w-full" max={job.framesTotal || 1} value={job.framesDone} aria-label="Tracking progress" /> : null}
          {job.state === "failed" && job.error ? (
            <Notice kind="error" title="Tracking failed">
              {job.error}
            </Notice>
          ) : null}
          {job.state === "done" && job.error ? <Notice kind="caution">{job.error}</Notice> : null}
          {job.state === "done" && view.checkAwaited ? (
            <p className="text-muted" role="status">
              Checking the tracks against theory…
            </p>
          ) : null}
        </div>
      ) : (
        <p className="text-muted">No tracking job yet.</p>
      )}
      {controlError ? <Notice kind="error">{controlError}</Notice> : null}
      {canChange ? (
        <div className="flex flex-wrap gap-3">
          {!active ? (
            <Button type="button" disabled={!ready || sending} onClick={() => void send("POST")}>
              {job?.state === "done" ? "Track again" : "Start tracking"}
            </Button>
          ) : (
            <Button type="button" tone="danger" disabled={sending} onClick={() => void send("DELETE")}>
              Cancel tracking
            </Button>
          )}
          {!ready && readyReason ? <p className="self-center text-muted">{readyReason}</p> : null}
        </div>
      ) : null}
    </div>
  );
}
