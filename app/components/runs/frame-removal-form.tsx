import { useRef, useState } from "react";
import { useFetcher } from "react-router";
import type { action as removeAction } from "~/routes/runs/frames-remove";
import { Button } from "~/components/ui/button";
import { Notice } from "~/components/ui/notice";

type Choice = "one" | "range" | "all";

/**
 * Removing the frame shown, a range or the whole stack, in two steps: choose, then confirm in
 * words that say what goes and what follows. Posts to /runs/:id/frames/remove; the page's data
 * reloads after it, so the viewer and the stack show the frames left.
 */
export function FrameRemovalForm({ runId, frame, count }: { runId: number; frame: { number: number; name: string }; count: number }) {
  const fetcher = useFetcher<typeof removeAction>();
  const [choice, setChoice] = useState<Choice>("one");
  const [first, setFirst] = useState("");
  const [last, setLast] = useState("");
  const [confirming, setConfirming] = useState(false);
  const confirmHeading = useRef<HTMLParagraphElement>(null);
  const busy = fetcher.state !== "idle";
  const from = choice === "one" ? frame.number : Number(first || frame.number);
  const to = choice === "one" ? frame.number : Number(last || first || frame.number);
  const rangeProblem =
    choice !== "range"
      ? null
      : !Number.isInteger(from) || !Number.isInteger(to) || from < 1 || to > count
        ? `Give frames between 1 and ${count}.`
        : to < from
          ? "The last frame comes before the first."
          : null;
  const what =
    choice === "all"
      ? `the whole stack (${count} frames)`
      : choice === "one" || from === to
        ? `frame ${from}${choice === "one" ? ` (${frame.name})` : ""}`
        : `frames ${from} to ${to} (${to - from + 1} frames)`;

  return (
    <fetcher.Form
      method="post"
      action={`/runs/${runId}/frames/remove`}
      className="no-print flex flex-col gap-3 border-t-2 border-line pt-3"
      onSubmit={() => setConfirming(false)}
    >
      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 font-bold">Remove frames before sign-off</legend>
        {(
          [
            ["one", `This frame (${frame.number})`],
            ["range", "A range of frames"],
            ["all", `The whole stack (${count} frames)`],
          ] as const
        ).map(([value, label]) => (
          <label key={value} className="flex min-h-12 items-center gap-3">
            <input
              type="radio"
              name="choice"
              value={value}
              checked={choice === value}
              onChange={() => {
                setChoice(value);
                setConfirming(false);
              }}
              className="size-6"
            />
            {label}
          </label>
        ))}
        {choice === "range" ? (
          <div className="flex flex-wrap gap-3">
            <label className="flex flex-col gap-1">
              <span className="font-bold">First frame</span>
              <input
                type="number"
                inputMode="numeric"
                min={1}
                max={count}
                value={first}
                placeholder={String(frame.number)}
                onChange={(e) => setFirst(e.target.value)}
                className="min-h-12 w-32 rounded-lg border-2 border-line-strong bg-sheet px-3"
              />
            </label>
            <label className="flex flex-col gap-1">
              <span className="font-bold">Last frame</span>
              <input
                type="number"
                inputMode="numeric"
                min={1}
                max={count}
                value={last}
                placeholder={first || String(frame.number)}
                onChange={(e) => setLast(e.target.value)}
                className="min-h-12 w-32 rounded-lg border-2 border-line-strong bg-sheet px-3"
              />
            </label>
          </div>
        ) : null}
        {rangeProblem ? <p className="text-disagrees-ink">{rangeProblem}</p> : null}
      </fieldset>
      <input type="hidden" name="first" value={String(from)} />
      <input type="hidden" name="last" value={String(to)} />
      <input type="hidden" name="frameCount" value={String(count)} />
      {choice === "all" ? <input type="hidden" name="all" value="yes" /> : null}
      {confirming ? (
        <div
          className="flex flex-col gap-3 rounded-card border-2 border-disagrees-ink bg-disagrees-bg p-4 text-disagrees-ink"
          data-testid="removal-confirmation"
        >
          {/* Focus comes here so a screen reader reads what is about to happen. */}
          <p ref={confirmHeading} tabIndex={-1} className="font-bold">
            Remove {what}?
          </p>
          <p>
            {choice === "all" ? "Every frame's file is" : "Their files are"} deleted from storage and cannot be brought back except by uploading them again.
            {choice === "all" ? "" : " The frames after them move up."} The tracks and the theory check were made from the stack as it is, so they go out of
            date; a tracked run is tracked again and checked from the frames left. The view setup and the conditions stay.
          </p>
          <div className="flex flex-wrap gap-3">
            <Button type="submit" name="confirm" value="yes" tone="danger" disabled={busy}>
              Yes, remove {choice === "all" ? "the whole stack" : choice === "one" || from === to ? `frame ${from}` : `frames ${from}–${to}`}
            </Button>
            <Button type="button" tone="plain" onClick={() => setConfirming(false)}>
              Keep the frames
            </Button>
          </div>
        </div>
      ) : (
        <Button
          type="button"
          tone="danger"
          className="self-start"
          disabled={busy || rangeProblem !== null}
          onClick={() => {
            setConfirming(true);
            requestAnimationFrame(() => confirmHeading.current?.focus());
          }}
        >
          {busy ? "Removing…" : `Remove ${choice === "all" ? "the whole stack" : choice === "one" || from === to ? `frame ${from}` : `frames ${from}–${to}`}…`}
        </Button>
      )}
      {fetcher.data && fetcher.state === "idle" ? (
        <Notice kind={fetcher.data.ok ? "success" : "error"}>
          <span data-testid="removal-outcome">{fetcher.data.message}</span>
        </Notice>
      ) : null}
    </fetcher.Form>
  );
}
