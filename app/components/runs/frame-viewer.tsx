import { useState, type KeyboardEvent } from "react";
import { Button } from "~/components/ui/button";
import { Notice } from "~/components/ui/notice";
import { describeFrames, framesWithoutTracer, nextIn, pointAt, trackSoFar, tracksPerFrame, type ReviewTrack } from "~/lib/frame-review";
import { formatFixed } from "~/lib/number-format";
import { FrameRemovalForm } from "./frame-removal-form";

export interface ViewerFrame {
  id: number;
  position: number;
  name: string;
  timeS: number | null;
  missing: boolean;
}

const palette = ["#ffd23f", "#3ee0cf", "#ff6b9a", "#9be564", "#c3a6ff", "#ff9f40"];

/**
 * Steps through a run's frames with the tracks so far, the detected point and the tank rim drawn
 * over each (an SVG in the frame's own pixels), and a strip marking the frames where no track found
 * the tracer. ←/→ step, Home/End jump while focus is inside the viewer; the range input scrubs.
 */
export function FrameViewer({
  runId,
  width,
  height,
  frameRateFps,
  frames,
  setup,
  tracks,
  tracksOutOfDate,
  canChange,
}: {
  runId: number;
  width: number;
  height: number;
  frameRateFps: number;
  frames: ViewerFrame[];
  setup: { centre: { x: number; y: number }; edge: { cx: number | null; cy: number | null; r: number } | null } | null;
  tracks: ReviewTrack[];
  tracksOutOfDate: boolean;
  canChange: boolean;
}) {
  const [chosen, setChosen] = useState(0);
  const count = frames.length;
  // The stack may shrink under the viewer (frames removed): stay on the last frame there is.
  const index = Math.min(chosen, count - 1);
  const frame = frames[index];
  if (!frame) return null;
  const tracked = tracks.length > 0;
  const perFrame = tracksPerFrame(count, tracks);
  const missed = tracked ? framesWithoutTracer(count, tracks) : [];
  const here = perFrame[index] ?? [];
  const mark = Math.max(3, Math.round(Math.min(width, height) / 160));
  const go = (i: number) => setChosen(Math.max(0, Math.min(count - 1, i)));
  const time = frame.timeS ?? index / frameRateFps;
  const prevMissed = nextIn(missed, index, -1);
  const nextMissed = nextIn(missed, index, 1);

  function onKeyDown(e: KeyboardEvent<HTMLDivElement>) {
    const target = e.target as HTMLElement;
    // Inputs keep their own keys (the range input already steps with them; number fields type).
    if (target.tagName === "INPUT" || target.tagName === "TEXTAREA" || target.tagName === "SELECT") return;
    const to = { ArrowLeft: index - 1, ArrowRight: index + 1, Home: 0, End: count - 1 }[e.key];
    if (to === undefined || e.altKey || e.ctrlKey || e.metaKey) return;
    e.preventDefault();
    go(to);
  }

  const status = !tracked
    ? tracksOutOfDate
      ? "tracks out of date (made from another stack)"
      : "not tracked yet"
    : here.length
      ? `tracer found (${here.length === 1 ? "track" : "tracks"} ${here.join(", ")})`
      : "tracer not found";

  return (
    // eslint-disable-next-line jsx-a11y/no-noninteractive-element-interactions -- the viewer takes its keys while focus is anywhere inside it
    <div
      role="group"
      aria-label="Frame viewer"
      aria-keyshortcuts="ArrowLeft ArrowRight Home End"
      // eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex -- the viewer itself takes focus so the arrow keys step without a button focused
      tabIndex={0}
      onKeyDown={onKeyDown}
      className="flex flex-col gap-3 rounded-card focus-visible:outline-4 focus-visible:outline-offset-4 focus-visible:outline-tank-600"
      data-testid="frame-viewer"
    >
      <p aria-live="polite" className="font-bold" data-testid="frame-position">
        Frame {index + 1} of {count} · {formatFixed(time, 3)} s · {frame.name} · {status}
      </p>
      {/* At most about two thirds of the window's height, so the controls stay in sight below the frame. */}
      <div
        className="relative mx-auto overflow-hidden rounded-card border-2 border-line-strong bg-ink"
        style={{ aspectRatio: `${width} / ${height}`, width: `min(100%, calc(65vh * ${width / height}))` }}
      >
        {frame.missing ? (
          <p className="absolute inset-0 flex items-center justify-center p-4 text-center text-white">The file of this frame is missing from storage.</p>
        ) : (
          <img
            src={`/runs/${runId}/frames/${frame.id}/image`}
            alt={`Frame ${index + 1} of the stack (${frame.name}), with the tracks so far and the tank rim drawn over it`}
            className="absolute inset-0 h-full w-full"
            draggable={false}
          />
        )}
        <svg viewBox={`0 0 ${width} ${height}`} className="pointer-events-none absolute inset-0 h-full w-full" aria-hidden="true" data-testid="frame-overlay">
          {setup?.edge && setup.edge.cx !== null && setup.edge.cy !== null ? (
            <circle
              cx={setup.edge.cx}
              cy={setup.edge.cy}
              r={setup.edge.r}
              fill="none"
              stroke="#3ee0cf"
              strokeWidth={mark / 2}
              strokeDasharray={`${mark * 2} ${mark}`}
              data-testid="overlay-rim"
            />
          ) : null}
          {setup ? (
            <g stroke="#ffffff" strokeWidth={mark / 3} opacity={0.8}>
              <line x1={setup.centre.x - mark * 2} y1={setup.centre.y} x2={setup.centre.x + mark * 2} y2={setup.centre.y} />
              <line x1={setup.centre.x} y1={setup.centre.y - mark * 2} x2={setup.centre.x} y2={setup.centre.y + mark * 2} />
            </g>
          ) : null}
          {tracks.map((t, k) => {
            const colour = palette[k % palette.length];
            const path = trackSoFar(t, index);
            const point = pointAt(t, index);
            return (
              <g key={t.number} data-testid={`overlay-track-${t.number}`}>
                {path.length > 1 ? (
                  <>
                    <polyline
                      points={path.map(([, x, y]) => `${x},${y}`).join(" ")}
                      fill="none"
                      stroke="#000"
                      strokeOpacity={0.55}
                      strokeWidth={mark / 2 + 2}
                    />
                    <polyline points={path.map(([, x, y]) => `${x},${y}`).join(" ")} fill="none" stroke={colour} strokeWidth={mark / 2} />
                  </>
                ) : null}
                {point ? (
                  <circle cx={point.x} cy={point.y} r={mark * 2} fill="none" stroke={colour} strokeWidth={mark / 2} data-testid="overlay-point" />
                ) : null}
              </g>
            );
          })}
        </svg>
      </div>

      <div className="flex flex-wrap items-center gap-2">
        <Button type="button" tone="plain" onClick={() => go(0)} disabled={index === 0} aria-label="First frame">
          First
        </Button>
        <Button type="button" tone="plain" onClick={() => go(index - 1)} disabled={index === 0} aria-label="Previous frame">
          ◀
        </Button>
        <Button type="button" tone="plain" onClick={() => go(index + 1)} disabled={index === count - 1} aria-label="Next frame">
          ▶
        </Button>
        <Button type="button" tone="plain" onClick={() => go(count - 1)} disabled={index === count - 1} aria-label="Last frame">
          Last
        </Button>
        <label className="flex min-w-48 flex-1 items-center gap-3">
          <span className="font-bold">Frame</span>
          <input
            type="range"
            min={1}
            max={count}
            step={1}
            value={index + 1}
            onChange={(e) => go(Number(e.target.value) - 1)}
            aria-valuetext={`Frame ${index + 1} of ${count}`}
            className="h-12 w-full accent-tank-700"
          />
        </label>
      </div>

      <FrameStrip count={count} index={index} missed={missed} tracked={tracked} />
      {tracked ? (
        <div className="flex flex-wrap items-center gap-2">
          <p className="mr-auto" data-testid="frames-without-tracer">
            {missed.length
              ? `Tracer not found in ${missed.length === 1 ? "frame" : "frames"} ${describeFrames(missed)} (${missed.length} of ${count}).`
              : `Tracer found in all ${count} frames.`}
          </p>
          {missed.length ? (
            <>
              <Button type="button" tone="quiet" onClick={() => prevMissed !== null && go(prevMissed)} disabled={prevMissed === null}>
                Previous miss
              </Button>
              <Button type="button" tone="quiet" onClick={() => nextMissed !== null && go(nextMissed)} disabled={nextMissed === null}>
                Next miss
              </Button>
            </>
          ) : null}
        </div>
      ) : tracksOutOfDate ? (
        <Notice kind="caution" title="The tracks were made from another stack">
          Frames were removed or added since the run was tracked, so its tracks are not drawn here. Tracking again draws the new ones.
        </Notice>
      ) : null}
      <p className="text-sm text-muted">Keys: ← and → step one frame, Home and End go to the first and last, while the viewer or a button in it has focus.</p>
      {canChange ? <FrameRemovalForm runId={runId} frame={{ number: index + 1, name: frame.name }} count={count} /> : null}
    </div>
  );
}

/** One cell a frame: a short bar where the tracer was found, a full red bar where it was not, the frame shown outlined. */
function FrameStrip({ count, index, missed, tracked }: { count: number; index: number; missed: number[]; tracked: boolean }) {
  const miss = new Set(missed);
  return (
    <div className="relative" aria-hidden="true">
      <svg viewBox={`0 0 ${count} 12`} preserveAspectRatio="none" className="block h-6 w-full rounded border border-line bg-paper" data-testid="frame-strip">
        {Array.from({ length: count }, (_, i) =>
          tracked && miss.has(i) ? (
            <rect key={i} x={i} y={0} width={1} height={12} className="fill-disagrees-ink" data-missed="true" />
          ) : (
            <rect key={i} x={i + 0.1} y={8} width={0.8} height={4} className={tracked ? "fill-agrees-ink" : "fill-line-strong"} />
          ),
        )}
      </svg>
      {/* The frame shown: at least 3 px wide however many frames share the strip. */}
      <span
        className="absolute -top-1 -bottom-1 w-[3px] min-w-[3px] -translate-x-1/2 rounded bg-tank-800"
        style={{ left: `${((index + 0.5) / count) * 100}%` }}
      />
    </div>
  );
}
