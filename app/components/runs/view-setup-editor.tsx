import { useRef, useState, type KeyboardEvent, type MouseEvent } from "react";
import { circleThroughThreePoints, type Point } from "~/lib/geometry";
import { Button } from "~/components/ui/button";
import { marksOf, nudge, type SetupValues } from "~/lib/setup-marks";
import { liveTilt } from "~/lib/tilt-preview";
import { KnownPointsPanel } from "./view-setup/known-points";
import { MarkList } from "./view-setup/mark-list";
import { PixelFields } from "./view-setup/pixel-fields";
import { SetupOverlay } from "./view-setup/setup-overlay";
import { TiltPanel } from "./view-setup/tilt-marks";
import { toolLabel, tools, toolText, type Tool } from "./view-setup/tools";
import { maxZoom, useFrameZoom } from "./view-setup/use-frame-zoom";
import { useNumberFields } from "./view-setup/use-number-fields";

export type { SetupValues };

/** Marks the view on one frame with an SVG drawn over the image in its own pixel coordinates. */
export function ViewSetupEditor({
  imageUrl,
  width,
  height,
  initial,
  errors,
}: {
  imageUrl: string;
  width: number;
  height: number;
  initial: SetupValues;
  errors: Record<string, string[] | undefined>;
}) {
  const [v, setV] = useState<SetupValues>(initial);
  const [tool, setTool] = useState<Tool>(initial.centre ? "rim" : "centre");
  const [clicks, setClicks] = useState<Point[]>([]);
  const [selected, setSelected] = useState<string>(initial.centre ? "centre" : "");
  const { zoom, zoomTo, viewport, bringIntoView } = useFrameZoom(width, height);
  const { numberField, clearDrafts } = useNumberFields(setV, errors);
  const svg = useRef<SVGSVGElement>(null);
  // Marks keep their size on screen at every zoom, so a zoomed view is as precise as it looks.
  const mark = Math.max(4, Math.round(Math.min(width, height) / 120)) / zoom;
  const marks = marksOf(v);
  const selectedMark = marks.find((m) => m.id === selected && m.at(v));
  const tilt = liveTilt(v);
  const selectedAt = selectedMark?.at(v) ?? null;

  /** A change made by a click or a button: the number fields show the new values, not what was being typed. */
  function replace(next: SetupValues) {
    setV(next);
    clearDrafts();
  }

  function onKeyDown(e: KeyboardEvent<HTMLDivElement>) {
    if (e.key === "+" || e.key === "=" || e.key === "-" || e.key === "_") {
      e.preventDefault();
      zoomTo(e.key === "+" || e.key === "=" ? zoom * 2 : zoom / 2, selectedAt);
      return;
    }
    if (!selectedMark || !e.key.startsWith("Arrow") || e.altKey || e.ctrlKey || e.metaKey) return;
    e.preventDefault();
    const next = nudge(v, selectedMark, e.key, e.shiftKey, { width, height });
    replace(next);
    bringIntoView(selectedMark.at(next), false);
  }

  function onClick(e: MouseEvent<SVGSVGElement>) {
    const box = svg.current!.getBoundingClientRect();
    const p = { x: ((e.clientX - box.left) / box.width) * width, y: ((e.clientY - box.top) / box.height) * height };
    const place = (next: SetupValues, id: string) => {
      replace(next);
      setSelected(id);
    };
    if (tool === "centre") return place({ ...v, centre: p }, "centre");
    if (tool === "mark") return place({ ...v, rateMark: p }, "rate-mark");
    // One kind of tilt marks at a time: the form refuses both, so a click of the other kind waits until these are cleared.
    if (tool === "tilt") return v.knownPoints.length ? undefined : place({ ...v, rimPoints: [...v.rimPoints, p] }, `rim-${v.rimPoints.length + 1}`);
    if (tool === "known") {
      if (v.rimPoints.length) return;
      return place({ ...v, knownPoints: [...v.knownPoints, { x: p.x, y: p.y, tableXCm: null, tableYCm: null }] }, `known-${v.knownPoints.length + 1}`);
    }
    const next = [...clicks, p];
    if (tool === "rim" && next.length === 3) {
      const c = circleThroughThreePoints(next[0]!, next[1]!, next[2]!);
      setClicks([]);
      if (c) place({ ...v, edge: c, centre: v.centre ?? { x: c.cx, y: c.cy } }, "edge");
      return;
    }
    if (tool === "scale" && next.length === 2) {
      setClicks([]);
      return place({ ...v, scalePoints: [next[0]!, next[1]!] }, "scale-2");
    }
    setClicks(next);
  }

  const otherKindPlaced = (tool === "tilt" && v.knownPoints.length > 0) || (tool === "known" && v.rimPoints.length > 0);

  return (
    <div className="grid gap-6 xl:grid-cols-[2fr_1fr]">
      <div>
        <div className="mb-3 flex flex-wrap gap-2" role="toolbar" aria-label="What to mark">
          {tools.map((t) => (
            <Button
              key={t}
              type="button"
              tone={tool === t ? "primary" : "plain"}
              aria-pressed={tool === t}
              onClick={() => {
                setTool(t);
                setClicks([]);
              }}
            >
              {toolLabel[t]}
            </Button>
          ))}
        </div>
        <p className="mb-2 text-muted" data-testid="tool-text">
          {otherKindPlaced
            ? `Clicks are not taken: the tilt is already marked with ${tool === "tilt" ? "known points" : "rim points"}. Clear those to use this tool.`
            : toolText[tool]}
        </p>
        <div className="mb-2 flex flex-wrap items-center gap-2">
          <Button type="button" tone="plain" onClick={() => zoomTo(zoom / 2, selectedAt)} disabled={zoom <= 1}>
            Zoom out
          </Button>
          <Button type="button" tone="plain" onClick={() => zoomTo(zoom * 2, selectedAt)} disabled={zoom >= maxZoom}>
            Zoom in
          </Button>
          <span aria-live="polite" className="font-bold" data-testid="setup-zoom">
            {zoom}×
          </span>
          <span className="text-sm text-muted">{zoom > 1 ? "Scroll or swipe the frame to move around it." : null}</span>
        </div>
        {/* eslint-disable-next-line jsx-a11y/no-noninteractive-element-interactions -- the frame takes the arrow keys while it has focus */}
        <div
          ref={viewport}
          role="group"
          aria-label="Frame to mark"
          aria-describedby="setup-keys"
          aria-keyshortcuts="ArrowLeft ArrowRight ArrowUp ArrowDown Shift+ArrowLeft Shift+ArrowRight Shift+ArrowUp Shift+ArrowDown + -"
          // eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex -- the frame takes focus so the arrow keys can nudge a mark and the zoomed view can be scrolled
          tabIndex={0}
          onKeyDown={onKeyDown}
          className="relative w-full touch-pan-x touch-pan-y overflow-auto overscroll-contain rounded-card border-2 border-line-strong bg-ink focus-visible:outline-4 focus-visible:outline-offset-2 focus-visible:outline-tank-600"
          style={{ aspectRatio: `${width} / ${height}` }}
          data-testid="setup-viewport"
        >
          <div className="relative" style={{ width: `${zoom * 100}%`, aspectRatio: `${width} / ${height}` }}>
            <img
              src={imageUrl}
              alt="A frame of this run"
              className="absolute inset-0 h-full w-full"
              style={{ transform: v.mirrored ? "scaleX(-1)" : undefined, imageRendering: zoom >= 4 ? "pixelated" : undefined }}
              draggable={false}
            />
            <SetupOverlay svg={svg} width={width} height={height} v={v} tilt={tilt} mark={mark} selectedAt={selectedAt} clicks={clicks} onClick={onClick} />
          </div>
        </div>
        <p className="mt-2 text-sm text-muted">
          Frame size {width} × {height} px. Marks are in the frame&apos;s own pixels.
        </p>
        <MarkList
          v={v}
          marks={marks}
          selected={selected}
          onSelect={(id, at) => {
            setSelected(id);
            bringIntoView(at, false);
          }}
        />
      </div>
      <div className="flex flex-col gap-4">
        <PixelFields v={v} setV={replace} numberField={numberField} />
        <TiltPanel
          v={v}
          tilt={tilt}
          error={errors.rimPoints}
          onClear={() => {
            replace({ ...v, rimPoints: [] });
            if (selected.startsWith("rim-")) setSelected("");
          }}
        />
        <KnownPointsPanel
          v={v}
          fit={tilt.fit}
          numberField={numberField}
          error={errors.knownPoints}
          onRemove={(i) => {
            replace({ ...v, knownPoints: v.knownPoints.filter((_, j) => j !== i) });
            if (selected.startsWith("known-")) setSelected("");
          }}
          onClear={() => {
            replace({ ...v, knownPoints: [] });
            if (selected.startsWith("known-")) setSelected("");
          }}
        />
        <label className="flex min-h-12 items-center gap-3 font-bold">
          <input type="checkbox" name="mirrored" className="h-6 w-6" checked={v.mirrored} onChange={(e) => setV({ ...v, mirrored: e.target.checked })} />
          The image is mirrored (camera under the table, or a mirror in the light path)
        </label>
      </div>
    </div>
  );
}
