import { useLayoutEffect, useRef, useState, type ChangeEvent, type KeyboardEvent, type MouseEvent } from "react";
import { circleThroughThreePoints, distance, type Point } from "~/lib/geometry";
import { Button } from "~/components/ui/button";
import { TextField } from "~/components/ui/field";
import { formatFixed } from "~/lib/number-format";
import { marksOf, nudge, type SetupValues } from "~/lib/setup-marks";
import { liveTilt, TiltOverlay, TiltPanel } from "./tilt-marks";
import { NOT_A_NUMBER, readNumber } from "~/lib/number-input";

export type { SetupValues };

/** How far the frame can be enlarged: at 8× a 1280 px frame on a 315 px phone shows about 2 image px per screen px. */
const maxZoom = 8;

type Tool = "centre" | "rim" | "scale" | "mark" | "tilt";
const toolText: Record<Tool, string> = {
  centre: "Click the rotation centre (the table's axis).",
  rim: "Click three points on the tank's inner rim; the circle through them is the region searched.",
  scale: "Click the two ends of a known length (a ruler or marks on the tank floor).",
  mark: "Click a small, distinct mark on the turntable away from the centre (a lab-fixed camera only): the table's rate is read from how it turns.",
  tilt: "Click five or more points where the water meets the tank wall, spread all round: each click adds one. Their ellipse shows how far the camera leans.",
};
const toolLabel: Record<Tool, string> = {
  centre: "Rotation centre",
  rim: "Tank edge (3 rim points)",
  scale: "Scale (2 points)",
  mark: "Mark on the table",
  tilt: "Tilt (5+ rim points)",
};

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
  const [zoom, setZoom] = useState<number>(1);
  // What the person is typing in a number field, kept as typed ("12.", "12,5") until it is left;
  // the marks follow every value that reads as a number, and nothing else (no NaN, no 0).
  const [drafts, setDrafts] = useState<Record<string, string>>({});
  const svg = useRef<SVGSVGElement>(null);
  const viewport = useRef<HTMLDivElement>(null);
  // Marks keep their size on screen at every zoom, so a zoomed view is as precise as it looks.
  const mark = Math.max(4, Math.round(Math.min(width, height) / 120)) / zoom;
  const marks = marksOf(v);
  const selectedMark = marks.find((m) => m.id === selected && m.at(v));
  const tilt = liveTilt(v);
  const selectedAt = selectedMark?.at(v) ?? null;

  // Where the zoomed frame should scroll once the next render has laid it out at its new size.
  const pendingView = useRef<{ p: Point; centre: boolean } | null>(null);
  useLayoutEffect(() => {
    const want = pendingView.current;
    const box = viewport.current;
    pendingView.current = null;
    if (!want || !box) return;
    const x = (want.p.x / width) * box.scrollWidth;
    const y = (want.p.y / height) * box.scrollHeight;
    const margin = 24;
    if (want.centre || x < box.scrollLeft + margin || x > box.scrollLeft + box.clientWidth - margin) box.scrollLeft = x - box.clientWidth / 2;
    if (want.centre || y < box.scrollTop + margin || y > box.scrollTop + box.clientHeight - margin) box.scrollTop = y - box.clientHeight / 2;
  });

  /** Scrolls the zoomed frame so p is in view (centred when `centre`) after the render this change causes. */
  function bringIntoView(p: Point | null, centre: boolean) {
    pendingView.current = p ? { p, centre } : null;
  }

  function zoomTo(next: number) {
    const z = Math.min(maxZoom, Math.max(1, next));
    if (z === zoom) return;
    const box = viewport.current;
    // Keep the selected mark in the middle, else the middle of what is shown now.
    const middle = box
      ? { x: ((box.scrollLeft + box.clientWidth / 2) / box.scrollWidth) * width, y: ((box.scrollTop + box.clientHeight / 2) / box.scrollHeight) * height }
      : null;
    setZoom(z);
    bringIntoView(selectedAt ?? middle, true);
  }

  function onKeyDown(e: KeyboardEvent<HTMLDivElement>) {
    if (e.key === "+" || e.key === "=") {
      e.preventDefault();
      zoomTo(zoom * 2);
      return;
    }
    if (e.key === "-" || e.key === "_") {
      e.preventDefault();
      zoomTo(zoom / 2);
      return;
    }
    if (!selectedMark || !e.key.startsWith("Arrow") || e.altKey || e.ctrlKey || e.metaKey) return;
    e.preventDefault();
    const next = nudge(v, selectedMark, e.key, e.shiftKey, { width, height });
    setV(next);
    setDrafts({});
    bringIntoView(selectedMark.at(next), false);
  }

  function toImage(e: MouseEvent<SVGSVGElement>): Point {
    const box = svg.current!.getBoundingClientRect();
    return { x: ((e.clientX - box.left) / box.width) * width, y: ((e.clientY - box.top) / box.height) * height };
  }

  function onClick(e: MouseEvent<SVGSVGElement>) {
    const p = toImage(e);
    setDrafts({});
    if (tool === "centre") {
      setV({ ...v, centre: p });
      setSelected("centre");
      return;
    }
    if (tool === "mark") {
      setV({ ...v, rateMark: p });
      setSelected("rate-mark");
      return;
    }
    if (tool === "tilt") {
      if (v.knownPoints.length) return;
      setV({ ...v, rimPoints: [...v.rimPoints, p] });
      setSelected(`rim-${v.rimPoints.length + 1}`);
      return;
    }
    const next = [...clicks, p];
    if (tool === "rim" && next.length === 3) {
      const c = circleThroughThreePoints(next[0]!, next[1]!, next[2]!);
      setClicks([]);
      if (c) {
        setV({ ...v, edge: c, centre: v.centre ?? { x: c.cx, y: c.cy } });
        setSelected("edge");
      }
      return;
    }
    if (tool === "scale" && next.length === 2) {
      setClicks([]);
      setV({ ...v, scalePoints: [next[0]!, next[1]!] });
      setSelected("scale-2");
      return;
    }
    setClicks(next);
  }

  const scalePx = v.scalePoints ? distance(v.scalePoints[0], v.scalePoints[1]) : null;
  const pxPerM = scalePx && v.scaleLengthCm && v.scaleLengthCm > 0 ? scalePx / (v.scaleLengthCm / 100) : null;
  const num = (n: number | undefined | null) => (n === null || n === undefined ? "" : String(Math.round(n * 100) / 100));

  /**
   * A number field of the setup: shows the draft while typed, moves the mark for each value that
   * reads as a number and passes `rule` (null when blank), and says at once what is wrong.
   */
  function numberField(name: string, shown: number | null | undefined, apply: (n: number | null) => SetupValues | null, rule?: (n: number) => string | null) {
    const draft = drafts[name];
    const text = draft ?? num(shown);
    const reading = readNumber(text);
    const live = reading.kind === "invalid" ? NOT_A_NUMBER : reading.kind === "number" && rule ? rule(reading.value) : null;
    return {
      name,
      inputMode: "decimal" as const,
      value: text,
      error: draft !== undefined ? (live ? [live] : undefined) : errors[name],
      onChange: (e: ChangeEvent<HTMLInputElement>) => {
        const typed = e.target.value;
        setDrafts((d) => ({ ...d, [name]: typed }));
        const r = readNumber(typed);
        if (r.kind === "invalid" || (r.kind === "number" && rule?.(r.value))) return;
        const next = apply(r.kind === "number" ? r.value : null);
        if (next) setV(next);
      },
      // A finished entry is shown as the number it was read as; a refused one stays, with its message.
      onBlur: () => {
        if (!live)
          setDrafts((d) => {
            const rest = { ...d };
            delete rest[name];
            return rest;
          });
      },
    };
  }
  const positive = (what: string, unit: string) => (n: number) => (n > 0 ? null : `${what} must be more than 0 ${unit}.`);

  return (
    <div className="grid gap-6 xl:grid-cols-[2fr_1fr]">
      <div>
        <div className="mb-3 flex flex-wrap gap-2" role="toolbar" aria-label="What to mark">
          {(["centre", "rim", "scale", "mark", "tilt"] as Tool[]).map((t) => (
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
        <p className="mb-2 text-muted">{toolText[tool]}</p>
        <div className="mb-2 flex flex-wrap items-center gap-2">
          <Button type="button" tone="plain" onClick={() => zoomTo(zoom / 2)} disabled={zoom <= 1}>
            Zoom out
          </Button>
          <Button type="button" tone="plain" onClick={() => zoomTo(zoom * 2)} disabled={zoom >= maxZoom}>
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
            <svg
              ref={svg}
              viewBox={`0 0 ${width} ${height}`}
              className="absolute inset-0 h-full w-full cursor-crosshair"
              onClick={onClick}
              data-testid="setup-overlay"
            >
              {v.edge && v.edge.r > 0 ? (
                <circle
                  cx={v.edge.cx}
                  cy={v.edge.cy}
                  r={v.edge.r}
                  fill="none"
                  stroke="#3ee0cf"
                  strokeWidth={mark / 2}
                  strokeDasharray={`${mark * 2} ${mark}`}
                />
              ) : null}
              {v.centre ? (
                <g stroke="#ffd23f" strokeWidth={mark / 2}>
                  <line x1={v.centre.x - mark * 3} y1={v.centre.y} x2={v.centre.x + mark * 3} y2={v.centre.y} />
                  <line x1={v.centre.x} y1={v.centre.y - mark * 3} x2={v.centre.x} y2={v.centre.y + mark * 3} />
                  <circle cx={v.centre.x} cy={v.centre.y} r={mark * 1.5} fill="none" />
                </g>
              ) : null}
              {v.scalePoints ? (
                <g stroke="#ff6b9a" strokeWidth={mark / 2}>
                  <line x1={v.scalePoints[0].x} y1={v.scalePoints[0].y} x2={v.scalePoints[1].x} y2={v.scalePoints[1].y} />
                  {v.scalePoints.map((p, i) => (
                    <circle key={i} cx={p.x} cy={p.y} r={mark} fill="#ff6b9a" />
                  ))}
                </g>
              ) : null}
              {v.rateMark ? (
                <rect
                  x={v.rateMark.x - mark * 2}
                  y={v.rateMark.y - mark * 2}
                  width={mark * 4}
                  height={mark * 4}
                  fill="none"
                  stroke="#9bff6b"
                  strokeWidth={mark / 2}
                />
              ) : null}
              <TiltOverlay points={v.rimPoints} correction={tilt.correction} mark={mark} />
              {selectedAt ? (
                <rect
                  x={selectedAt.x - mark * 4}
                  y={selectedAt.y - mark * 4}
                  width={mark * 8}
                  height={mark * 8}
                  fill="none"
                  stroke="#ffffff"
                  strokeWidth={mark / 3}
                  strokeDasharray={`${mark} ${mark / 2}`}
                  data-testid="selected-mark"
                />
              ) : null}
              {clicks.map((p, i) => (
                <circle key={i} cx={p.x} cy={p.y} r={mark} fill="#ffffff" stroke="#000" />
              ))}
            </svg>
          </div>
        </div>
        <p className="mt-2 text-sm text-muted">
          Frame size {width} × {height} px. Marks are in the frame's own pixels.
        </p>
        <fieldset className="mt-3 flex flex-col gap-1">
          <legend className="mb-1 font-bold">Mark moved by the arrow keys</legend>
          {marks.map((m) => {
            const at = m.at(v);
            return (
              <label key={m.id} className={`flex min-h-12 items-center gap-3 ${at ? "" : "text-muted"}`}>
                <input
                  type="radio"
                  name="nudgeMark"
                  value={m.id}
                  checked={selected === m.id && at !== null}
                  disabled={!at}
                  onChange={() => {
                    setSelected(m.id);
                    bringIntoView(at, false);
                  }}
                  className="size-6"
                />
                <span>
                  {m.label}
                  <span className="text-muted" data-testid={`mark-${m.id}`}>
                    {at ? ` at ${formatFixed(at.x, 1)}, ${formatFixed(at.y, 1)} px` : " (not placed yet)"}
                  </span>
                </span>
              </label>
            );
          })}
          <p id="setup-keys" className="text-sm text-muted">
            Choose a mark, then click the frame (or move to it with Tab) and use the arrow keys: 1 px a press, 10 px with Shift; + and − zoom.
          </p>
        </fieldset>
      </div>
      <div className="flex flex-col gap-4">
        <fieldset className="grid grid-cols-2 gap-3">
          <legend className="mb-1 font-bold">Rotation centre (px)</legend>
          <TextField label="Column" {...numberField("centreX", v.centre?.x, (n) => (n === null ? null : { ...v, centre: { x: n, y: v.centre?.y ?? 0 } }))} />
          <TextField label="Row" {...numberField("centreY", v.centre?.y, (n) => (n === null ? null : { ...v, centre: { x: v.centre?.x ?? 0, y: n } }))} />
        </fieldset>
        <fieldset className="grid grid-cols-3 gap-3">
          <legend className="mb-1 font-bold">Tank edge (px)</legend>
          <TextField
            label="Column"
            {...numberField("edgeX", v.edge?.cx, (n) => (n === null ? null : { ...v, edge: { cx: n, cy: v.edge?.cy ?? 0, r: v.edge?.r ?? 0 } }))}
          />
          <TextField
            label="Row"
            {...numberField("edgeY", v.edge?.cy, (n) => (n === null ? null : { ...v, edge: { cx: v.edge?.cx ?? 0, cy: n, r: v.edge?.r ?? 0 } }))}
          />
          <TextField
            label="Radius"
            {...numberField(
              "edgeR",
              v.edge?.r,
              (n) => (n === null ? null : { ...v, edge: { cx: v.edge?.cx ?? 0, cy: v.edge?.cy ?? 0, r: n } }),
              positive("The tank edge's radius", "px"),
            )}
          />
        </fieldset>
        {v.edge ? (
          <Button
            type="button"
            tone="quiet"
            onClick={() => {
              setV({ ...v, centre: { x: v.edge!.cx, y: v.edge!.cy } });
              setDrafts({});
            }}
          >
            Use the tank's centre as the rotation centre
          </Button>
        ) : null}
        <fieldset className="flex flex-col gap-3">
          <legend className="mb-1 font-bold">Scale</legend>
          <TextField
            label="Known length between the two points"
            unit="cm"
            {...numberField("scaleLengthCm", v.scaleLengthCm, (n) => ({ ...v, scaleLengthCm: n }), positive("The known length", "cm"))}
          />
          <input type="hidden" name="scaleLengthPx" value={scalePx === null ? "" : String(scalePx)} />
          <input type="hidden" name="scalePoints" value={v.scalePoints ? JSON.stringify(v.scalePoints) : ""} />
          <p className="text-muted" data-testid="scale-readout">
            {pxPerM
              ? `${formatFixed(pxPerM / 100, 2)} px per cm (${formatFixed(pxPerM, 1)} px/m)`
              : "No scale: speeds and radii stay in pixels; f does not need one."}
          </p>
        </fieldset>
        <fieldset className="grid grid-cols-2 gap-3">
          <legend className="mb-1 font-bold">Mark on the table (px, optional)</legend>
          <TextField
            label="Column"
            {...numberField("rateMarkX", v.rateMark?.x, (n) => ({ ...v, rateMark: n === null ? null : { x: n, y: v.rateMark?.y ?? 0 } }))}
          />
          <TextField
            label="Row"
            {...numberField("rateMarkY", v.rateMark?.y, (n) => ({ ...v, rateMark: n === null ? null : { x: v.rateMark?.x ?? 0, y: n } }))}
          />
          <p className="col-span-2 text-sm text-muted">
            With a lab-fixed camera the table&apos;s rate is read from this mark; a co-rotating camera reads it from the room beyond the tank edge instead.
          </p>
        </fieldset>
        {v.rateMark ? (
          <Button
            type="button"
            tone="quiet"
            onClick={() => {
              setV({ ...v, rateMark: null });
              setDrafts({});
            }}
          >
            Clear the mark on the table
          </Button>
        ) : null}
        <TiltPanel
          v={v}
          error={errors.rimPoints ?? errors.knownPoints}
          onClear={() => {
            setV({ ...v, rimPoints: [], knownPoints: [] });
            if (selected.startsWith("rim-") || selected.startsWith("known-")) setSelected("");
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
