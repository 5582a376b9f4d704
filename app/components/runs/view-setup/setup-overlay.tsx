import type { MouseEvent, RefObject } from "react";
import type { Point } from "~/lib/geometry";
import type { SetupValues } from "~/lib/setup-marks";
import type { LiveTilt } from "~/lib/tilt-preview";
import { KnownPointsOverlay } from "./known-points";
import { TiltOverlay } from "./tilt-marks";

/** The marks drawn over the frame in its own pixels; `mark` is a mark's size in image px at the present zoom. */
export function SetupOverlay({
  svg,
  width,
  height,
  v,
  tilt,
  mark,
  selectedAt,
  clicks,
  onClick,
}: {
  svg: RefObject<SVGSVGElement | null>;
  width: number;
  height: number;
  v: SetupValues;
  tilt: LiveTilt;
  mark: number;
  selectedAt: Point | null;
  clicks: readonly Point[];
  onClick: (e: MouseEvent<SVGSVGElement>) => void;
}) {
  return (
    <svg ref={svg} viewBox={`0 0 ${width} ${height}`} className="absolute inset-0 h-full w-full cursor-crosshair" onClick={onClick} data-testid="setup-overlay">
      {v.edge && v.edge.r > 0 ? (
        <circle cx={v.edge.cx} cy={v.edge.cy} r={v.edge.r} fill="none" stroke="#3ee0cf" strokeWidth={mark / 2} strokeDasharray={`${mark * 2} ${mark}`} />
      ) : null}
      <KnownPointsOverlay entries={v.knownPoints} fit={tilt.fit} mark={mark} />
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
        <rect x={v.rateMark.x - mark * 2} y={v.rateMark.y - mark * 2} width={mark * 4} height={mark * 4} fill="none" stroke="#9bff6b" strokeWidth={mark / 2} />
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
  );
}
